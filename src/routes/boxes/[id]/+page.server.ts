import { error, fail } from '@sveltejs/kit';
import { DateTime } from 'luxon';
import { outageKinds } from '$lib/domain/bookings';
import { fromLocal } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { endOutage, extendOutage, createOutage } from '$lib/server/services/outages';
import { gloveHistory, glovesOfBox } from '$lib/server/services/gloves';
import { hasRole } from '$lib/domain/roles';
import { idParam } from '$lib/server/params';
import { boxOutages, getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import { latestReadings, recordReading } from '$lib/server/services/atmosphere';
import { documentsFor, mayManageDocuments } from '$lib/server/services/documents';
import { readingFromForm } from '$lib/validation/readings';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box, summary } = found.value;
	return {
		box: summary,
		rules: {
			slotStepMin: box.slotStepMin,
			minLengthMin: box.minLengthMin,
			maxLengthMin: box.maxLengthMin,
			horizonDays: box.horizonDays,
			weeklyQuotaMin: box.weeklyQuotaMin,
			purgeMin: box.purgeMin,
			needsApproval: box.needsApproval,
			excludedClasses: box.excludedClasses
		},
		thresholds: {
			o2WarnPpm: box.o2WarnPpm,
			o2AlarmPpm: box.o2AlarmPpm,
			h2oWarnPpm: box.h2oWarnPpm,
			h2oAlarmPpm: box.h2oAlarmPpm
		},
		rates: { internal: box.rateInternal, external: box.rateExternal },
		volumeL: box.volumeL,
		description: box.description,
		outages: await boxOutages(id),
		// Notes on readings are for the managers they were sent to.
		readings: (await latestReadings(id, 8)).map((r) => ({
			id: r.id,
			at: r.at,
			o2Ppm: r.o2Ppm,
			h2oPpm: r.h2oPpm,
			source: r.source,
			note: hasRole(user.role, 'manager') ? r.note : null
		})),
		documents: await documentsFor({ boxId: id }),
		canManageDocuments: mayManageDocuments(user, 'box'),
		gloves: await glovesOfBox(id),
		gloveHistory: hasRole(user.role, 'manager') ? await gloveHistory(id) : [],
		outageDefaults: outageDefaults()
	};
};

/** Start now (rounded down to 5 min), expected end in two hours, on the facility clock. */
function outageDefaults() {
	const now = DateTime.now().setZone(config.facilityTz).startOf('minute');
	const start = now.minus({ minutes: now.minute % 5 });
	const end = start.plus({ hours: 2 });
	return {
		startDate: start.toISODate()!,
		startTime: start.toFormat('HH:mm'),
		endDate: end.toISODate()!,
		endTime: end.toFormat('HH:mm')
	};
}

type Values = Record<string, string>;

function localInstant(values: Values, prefix: 'start' | 'end') {
	return fromLocal(values[`${prefix}Date`] ?? '', values[`${prefix}Time`] ?? '', config.facilityTz);
}

export const actions: Actions = {
	reading: async (event) => {
		const actor = requireRole(event, 'member');
		const boxId = idParam(event.params.id, 'The box');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const { reading, errors } = readingFromForm(values);
		if (Object.keys(errors).length) return fail(400, { form: 'reading', values, errors });
		const result = await attempt(() => recordReading(actor, boxId, reading));
		if (!result.ok)
			return fail(result.error.status, {
				form: 'reading',
				values,
				errors: {},
				message: result.error.message
			});
		return { form: 'reading', recorded: true, state: result.value.state };
	},
	outage: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const errors: Record<string, string> = {};
		const start = localInstant(values, 'start');
		const end = localInstant(values, 'end');
		if (!start) errors.start = 'Enter a start date and time that exist.';
		if (!end) errors.end = 'Enter an expected end date and time that exist.';
		if (start && end && end <= start) errors.end = 'The expected end must be after the start.';
		if (!outageKinds.includes(values.kind as (typeof outageKinds)[number]))
			errors.kind = 'Choose a kind.';
		const reason = (values.reason ?? '').trim();
		if (reason.length < 3 || reason.length > 500)
			errors.reason = 'Give a reason (3–500 characters); it goes to everyone affected.';
		if (Object.keys(errors).length) return fail(400, { form: 'outage', values, errors });
		const result = await attempt(() =>
			createOutage(actor, boxId, {
				start: start!,
				end: end!,
				kind: values.kind as (typeof outageKinds)[number],
				reason
			})
		);
		if (!result.ok)
			return fail(result.error.status, {
				form: 'outage',
				values,
				errors: {},
				message: result.error.message
			});
		return { form: 'outage', cancelled: result.value.cancelledBookingIds.length };
	},
	endOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		const id = formId((await event.request.formData()).get('outageId'));
		const result = await attempt(() => endOutage(actor, id));
		if (!result.ok)
			return fail(result.error.status, { form: 'end', message: result.error.message });
		return { form: 'end', ended: true };
	},
	extendOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const end = localInstant(values, 'end');
		if (!end)
			return fail(400, {
				form: 'extend',
				message: 'Enter an expected end date and time that exist.'
			});
		const result = await attempt(() => extendOutage(actor, formId(values.outageId), end));
		if (!result.ok)
			return fail(result.error.status, { form: 'extend', message: result.error.message });
		return { form: 'extend', cancelled: result.value.cancelledBookingIds.length };
	}
};
