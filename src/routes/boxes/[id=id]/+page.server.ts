import { error } from '@sveltejs/kit';
import { DateTime } from 'luxon';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { previewEnd, previewExtension, previewOutage } from '$lib/server/services/outage-reads';
import { createOutage, endOutage, extendOutage } from '$lib/server/services/outages';
import { gloveHistory, glovesOfBox } from '$lib/server/services/gloves';
import { hasRole } from '$lib/domain/roles';
import { idParam } from '$lib/server/params';
import { boxOutages, boxOutagesList, getBox } from '$lib/server/services/boxes';
import { listInMemory, readListQuery, type ListSpec } from '$lib/domain/listing';
import { attempt } from '$lib/server/services/errors';
import { latestReadings, recordReading } from '$lib/server/services/atmosphere';
import { documentsFor, mayManageDocuments } from '$lib/server/services/documents';
import { readingCount } from '$lib/server/services/reading-list';
import { readingSchema } from '$lib/validation/readings';
import { endOutageSchema, moveOutageSchema, outageSchema } from '$lib/validation/outages';
import { runConfirmedForm, runForm, type Ask } from '$lib/server/forms';
import { formatDateTime, formatRange } from '$lib/domain/time';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box, summary } = found.value;
	const outageList = await boxOutages(id, readListQuery(event.url.searchParams, boxOutagesList));
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
		// Not begun yet: "End now" withdraws it instead (services/outages.ts closeOutage).
		outages: outageList.rows.map((o) => ({
			...o,
			active: o.endAt > new Date(),
			begun: o.startAt <= new Date()
		})),
		outagesView: outageList.view,
		// Notes on readings are for the managers they were sent to.
		readings: (await latestReadings(id, 8)).map((r) => ({
			id: r.id,
			at: r.at,
			o2Ppm: r.o2Ppm,
			h2oPpm: r.h2oPpm,
			source: r.source,
			note: hasRole(user.role, 'manager') ? r.note : null
		})),
		readingTotal: await readingCount(id),
		documents: await documentsFor({ boxId: id }),
		canManageDocuments: mayManageDocuments(user, 'box'),
		gloves: await glovesOfBox(id),
		gloveHistory: hasRole(user.role, 'manager')
			? listInMemory(
					await gloveHistory(id),
					readListQuery(event.url.searchParams, gloveHistoryList),
					{ sortBy: { fitted: (g) => g.installedAt, port: (g) => g.position } }
				)
			: null,
		outageDefaults: outageDefaults()
	};
};

/** Every glove the box's ports have had: a few a year, so sorted and paged in memory. */
const gloveHistoryList = {
	prefix: 'gloves',
	sorts: ['fitted', 'port'],
	defaultSort: 'fitted',
	defaultDir: 'desc',
	perPage: 10
} as const satisfies ListSpec;

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
		return runConfirmedForm(
			event.request,
			outageSchema,
			// Nothing to confirm when no booking overlaps: nobody loses anything.
			async ({ start, end }) =>
				cancelling(
					await previewOutage(actor, boxId, { start, end }),
					`Take the box out of service ${formatRange(start, end, config.facilityTz)}?`,
					'Yes, take it out of service'
				),
			async (input) => ({
				cancelled: (await createOutage(actor, boxId, input)).cancelledBookingIds.length
			}),
			{ form: 'outage', instants }
		);
	},
	endOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		return runConfirmedForm(
			event.request,
			endOutageSchema,
			async ({ outageId }) => {
				const { what, outage, cancelledCount } = await previewEnd(actor, outageId);
				const kept =
					cancelledCount === 1
						? ' The booking it cancelled stays cancelled; its holder can book again.'
						: cancelledCount
							? ` The ${cancelledCount} bookings it cancelled stay cancelled; their holders can book again.`
							: '';
				return what === 'withdrawn'
					? {
							title: 'Withdraw this planned outage?',
							message: `It has not begun (${formatRange(outage.startAt, outage.endAt, config.facilityTz)}): it is removed, and the box stays in service.${kept}`,
							yes: 'Yes, withdraw it'
						}
					: {
							title: 'End this outage now?',
							message: `This ends the outage now and puts the box back in service.${await stillSealed(boxId)}${kept}`,
							yes: 'Yes, end it now'
						};
			},
			async ({ outageId }) => ({
				ended: true,
				withdrawn: (await endOutage(actor, outageId)).withdrawn
			}),
			{ form: 'end' }
		);
	},
	extendOutage: async (event) => {
		const actor = requireRole(event, 'manager');
		return runConfirmedForm(
			event.request,
			moveOutageSchema,
			async ({ outageId, end }) =>
				cancelling(
					await previewExtension(actor, outageId, end),
					`Move the outage’s end to ${formatDateTime(end, config.facilityTz)}?`,
					'Yes, move the end'
				),
			async ({ outageId, end }) => ({
				cancelled: (await extendOutage(actor, outageId, end)).cancelledBookingIds.length
			}),
			{ form: 'extend', instants: { end: instants.end } }
		);
	}
};

/** Ports left sealed after an abandoned change stay sealed when the box returns to service. */
async function stillSealed(boxId: number) {
	const sealed = (await glovesOfBox(boxId)).filter((g) => g.sealed && !g.openChangeId);
	if (!sealed.length) return '';
	const ports = sealed.map((g) => g.port.position).join(' and ');
	return ` The ${ports} ${sealed.length === 1 ? 'port stays' : 'ports stay'} sealed with ${sealed.length === 1 ? 'its cover' : 'their covers'}.`;
}

const bookingsWord = (n: number) => (n === 1 ? '1 booking' : `${n} bookings`);

/** The question for an outage that cancels bookings, each by person and time; null for none. */
function cancelling(
	hit: { userName: string; start: Date; end: Date }[],
	title: string,
	yes: string
): Ask | null {
	if (!hit.length) return null;
	return {
		title,
		message: `This cancels ${bookingsWord(hit.length)}; each holder is told by e-mail and in Boxwright.`,
		details: hit.map((b) => `${b.userName}, ${formatRange(b.start, b.end, config.facilityTz)}`),
		yes
	};
}
