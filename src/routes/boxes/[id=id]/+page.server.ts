import { error } from '@sveltejs/kit';
import { DateTime } from 'luxon';
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
import { readingSchema } from '$lib/validation/readings';
import { endOutageSchema, moveOutageSchema, outageSchema } from '$lib/validation/outages';
import { runForm } from '$lib/server/forms';
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
		outages: (await boxOutages(id)).map((o) => ({ ...o, active: o.endAt > new Date() })),
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
		endTime: end.toFormat('HH:mm'),
		kind: 'other'
	};
}

const instants = {
	start: ['startDate', 'startTime'],
	end: ['endDate', 'endTime']
} as const;

export const actions: Actions = {
	reading: async (event) => {
		const actor = requireRole(event, 'member');
		const boxId = idParam(event.params.id, 'The box');
		return runForm(
			event.request,
			readingSchema,
			async (reading) => ({
				recorded: true,
				state: (await recordReading(actor, boxId, reading)).state
			}),
			{ form: 'reading' }
		);
	},
	outage: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		return runForm(
			event.request,
			outageSchema,
			async (input) => ({
				cancelled: (await createOutage(actor, boxId, input)).cancelledBookingIds.length
			}),
			{ form: 'outage', instants }
		);
	},
	endOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			endOutageSchema,
			async ({ outageId }) => {
				await endOutage(actor, outageId);
				return { ended: true };
			},
			{ form: 'end' }
		);
	},
	extendOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			moveOutageSchema,
			async ({ outageId, end }) => ({
				cancelled: (await extendOutage(actor, outageId, end)).cancelledBookingIds.length
			}),
			{ form: 'extend', instants: { end: instants.end } }
		);
	}
};
