import { error } from '@sveltejs/kit';
import { readListQuery } from '$lib/domain/listing';
import { hasRole } from '$lib/domain/roles';
import { runForm } from '$lib/server/forms';
import { requireUser, requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import { leakTestList, leakTestPage, recordLeakTest } from '$lib/server/services/leak-tests';
import { leakTestFormSchema } from '$lib/validation/leak-tests';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box } = found.value;
	const history = await leakTestPage(id, readListQuery(event.url.searchParams, leakTestList));
	return {
		box: {
			id: box.id,
			name: box.name,
			volumeL: box.volumeL,
			requiredLeakClass: box.requiredLeakClass
		},
		tests: history.rows,
		view: history.view,
		canRecord: hasRole(user.role, 'manager')
	};
};

export const actions: Actions = {
	/** The form works in the units on the instruments: mbar, °C, minutes. */
	default: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		return runForm(event.request, leakTestFormSchema, async ({ input, note }) => {
			const test = await recordLeakTest(actor, boxId, { ...input, note });
			return { saved: { passed: test.passed, isoClass: test.isoClass } };
		});
	}
};
