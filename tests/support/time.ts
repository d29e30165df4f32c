import { DateTime } from 'luxon';

export const facilityTz = process.env.FACILITY_TZ ?? 'Europe/Berlin';

/**
 * A wall-clock slot `days` from today in the facility zone, as ISO strings with offset.
 * Relative to the clock on purpose: the server checks "not in the past" against its own.
 */
export function slot(days: number, startHour: number, minutes = 60, startMinute = 0) {
	const start = DateTime.now()
		.setZone(facilityTz)
		.startOf('day')
		.plus({ days })
		.set({ hour: startHour, minute: startMinute });
	const end = start.plus({ minutes });
	return { start: start.toISO()!, end: end.toISO()! };
}
