import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { fail, readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { boxExists } from '$lib/server/services/boxes';
import { leakTestsOf, recordLeakTest } from '$lib/server/services/leak-tests';
import { leakTestSchema } from '$lib/validation/leak-tests';
import type { RequestHandler } from './$types';

type Row = Awaited<ReturnType<typeof leakTestsOf>>[number];
const shape = (t: Omit<Row, 'testedBy'>) => ({
	id: t.id,
	method: t.method,
	inputs: t.inputs,
	hourlyLeakRate: t.hourlyLeakRate,
	isoClass: t.isoClass,
	requiredClass: t.requiredClass,
	passed: t.passed,
	note: t.note,
	testedAt: isoInZone(t.testedAt, config.facilityTz)
});

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const input = await readJson(event.request, leakTestSchema);
	const test = await serve(() => recordLeakTest(user, boxId, input));
	return json({ leakTest: shape(test) }, { status: 201 });
};

export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const boxId = idParam(event.params.id, 'The box');
	if (!(await boxExists(boxId))) fail(404, 'The box was not found.');
	return json({ leakTests: (await leakTestsOf(boxId)).map(shape) });
};
