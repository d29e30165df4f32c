import { error, fail } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { requireUser, requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import { leakTestsOf, recordLeakTest, type LeakTestInput } from '$lib/server/services/leak-tests';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box } = found.value;
	return {
		box: {
			id: box.id,
			name: box.name,
			volumeL: box.volumeL,
			requiredLeakClass: box.requiredLeakClass
		},
		tests: await leakTestsOf(id),
		canRecord: hasRole(user.role, 'manager')
	};
};

/** The form works in the units on the instruments: mbar, °C, minutes. */
function fromForm(v: Record<string, string>): LeakTestInput | null {
	const num = (key: string) => (v[key]?.trim() ? Number(v[key].replace(',', '.')) : Number.NaN);
	if (v.method === 'oxygen')
		return { method: 'oxygen', o2RisePpm: num('o2RisePpm'), minutes: num('minutes') };
	if (v.method === 'gauge')
		return {
			method: 'gauge',
			gauge1Pa: num('gauge1Mbar') * 100,
			gauge2Pa: num('gauge2Mbar') * 100,
			barometric1Pa: num('baro1Mbar') * 100,
			barometric2Pa: num('baro2Mbar') * 100,
			t1K: num('t1C') + 273.15,
			t2K: num('t2C') + 273.15,
			hours: num('minutes') / 60
		};
	return null;
}

/** The domain names fields in SI units; the form's own names are what the user sees. */
const formField: Record<string, string> = {
	gauge1Pa: 'gauge1Mbar',
	gauge2Pa: 'gauge2Mbar',
	barometric1Pa: 'baro1Mbar',
	barometric2Pa: 'baro2Mbar',
	t1K: 't1C',
	t2K: 't2C',
	hours: 'minutes',
	p1Pa: 'gauge1Mbar',
	p2Pa: 'gauge2Mbar'
};

export const actions: Actions = {
	default: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const values = Object.fromEntries(await event.request.formData()) as Record<string, string>;
		const input = fromForm(values);
		if (!input)
			return fail(400, {
				values,
				errors: { method: 'Choose a method.' } as Record<string, string>
			});
		const note = (values.note ?? '').trim();
		if (note.length > 500)
			return fail(400, { values, errors: { note: 'Use at most 500 characters.' } });
		const result = await attempt(() => recordLeakTest(actor, boxId, { ...input, note }));
		if (!result.ok) {
			const fields =
				(result.error.details as { fields?: Record<string, string> } | undefined)?.fields ?? {};
			const errors = Object.fromEntries(
				Object.entries(fields).map(([k, m]) => [formField[k] ?? k, m])
			);
			return fail(result.error.status, { values, errors, message: result.error.message });
		}
		return { saved: { passed: result.value.passed, isoClass: result.value.isoClass } };
	}
};
