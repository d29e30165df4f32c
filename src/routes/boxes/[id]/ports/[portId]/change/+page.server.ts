import { error, fail, redirect } from '@sveltejs/kit';
import { fromLocal } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { refusedForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { planGloveChange, startGloveChange } from '$lib/server/services/glove-changes';
import type { Actions, PageServerLoad } from './$types';

/** The expected end from the page's date and time fields (facility clock), if given. */
function expectedEnd(params: URLSearchParams | FormData) {
	const date = String(params.get('endDate') ?? '');
	const time = String(params.get('endTime') ?? '');
	if (!date && !time) return { end: undefined, problem: null };
	const end = fromLocal(date, time, config.facilityTz);
	return end
		? { end, problem: null }
		: { end: undefined, problem: 'Enter an expected end date and time that exist.' };
}

export const load: PageServerLoad = async (event) => {
	const actor = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const portId = idParam(event.params.portId, 'The port');
	const { end, problem } = expectedEnd(event.url.searchParams);
	const plan = await attempt(() => planGloveChange(actor, boxId, portId, end));
	if (!plan.ok) {
		if (plan.error.status === 404) error(404, { message: plan.error.message, code: 'not_found' });
		const fallback = await attempt(() => planGloveChange(actor, boxId, portId));
		if (!fallback.ok) error(404, { message: fallback.error.message, code: 'not_found' });
		return { plan: fallback.value, problem: plan.error.message };
	}
	return { plan: plan.value, problem };
};

export const actions: Actions = {
	start: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const portId = idParam(event.params.portId, 'The port');
		const form = await event.request.formData();
		const { end, problem } = expectedEnd(form);
		const values = {
			endDate: String(form.get('endDate') ?? ''),
			endTime: String(form.get('endTime') ?? '')
		};
		if (problem) return fail(400, { values, errors: { endDate: problem }, message: problem });
		const result = await attempt(() =>
			startGloveChange(actor, boxId, { portId, expectedEnd: end })
		);
		if (!result.ok) return refusedForm(values, result.error);
		redirect(303, `/manage/glove-changes/${result.value.id}`);
	}
};
