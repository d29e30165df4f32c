import { error, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { fromLocal, toLocalParts } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt, ServiceError } from '$lib/server/services/errors';
import { planGloveChange, startGloveChange } from '$lib/server/services/glove-change-start';
import { isoDateTime } from '$lib/validation/bookings';
import type { Actions, PageServerLoad } from './$types';

/** The expected end typed on the page (facility clock), if any. */
function typedEnd(params: URLSearchParams) {
	const date = params.get('endDate') ?? '';
	const time = params.get('endTime') ?? '';
	if (!date && !time) return { end: undefined, typed: null, problem: null };
	const end = fromLocal(date, time, config.facilityTz) ?? undefined;
	return {
		end,
		typed: { date, time },
		problem: end ? null : 'Enter an expected end date and time that exist.'
	};
}

export const load: PageServerLoad = async (event) => {
	const actor = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const portId = idParam(event.params.portId, 'The port');
	const { end, typed, problem } = typedEnd(event.url.searchParams);
	const plan = await attempt(() => planGloveChange(actor, boxId, portId, end));
	if (plan.ok)
		return { plan: plan.value, typed, problem, changed: event.url.searchParams.has('changed') };
	if (plan.error.status === 404) error(404, { message: plan.error.message, code: 'not_found' });
	// An end that cannot be used: the page shows what was typed and the default plan's list,
	// and the seal button waits for a good end.
	const fallback = await attempt(() => planGloveChange(actor, boxId, portId));
	if (!fallback.ok) error(404, { message: fallback.error.message, code: 'not_found' });
	return { plan: fallback.value, typed, problem: plan.error.message, changed: false };
};

const startSchema = z.strictObject({
	expectedEnd: isoDateTime('expected end'),
	previewedEnd: isoDateTime('previewed end')
});

export const actions: Actions = {
	start: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const portId = idParam(event.params.portId, 'The port');
		const answer = await runForm(
			event.request,
			startSchema,
			async ({ expectedEnd, previewedEnd }) => {
				// Sealing with an end whose bookings were not shown: show them first.
				if (Math.abs(expectedEnd.getTime() - previewedEnd.getTime()) >= 60_000)
					return { reshow: expectedEnd };
				if (expectedEnd <= new Date())
					throw new ServiceError(400, 'The expected end must be in the future.', {
						fields: { expectedEnd: 'The expected end must be in the future.' }
					});
				return { started: await startGloveChange(actor, boxId, { portId, expectedEnd }) };
			},
			{ instants: { expectedEnd: ['endDate', 'endTime'] } }
		);
		if ('reshow' in answer && answer.reshow) {
			const { date, time } = toLocalParts(answer.reshow, config.facilityTz);
			redirect(303, `?endDate=${date}&endTime=${time}&changed=1`);
		}
		if ('started' in answer && answer.started)
			redirect(303, `/manage/glove-changes/${answer.started.id}`);
		return answer;
	}
};
