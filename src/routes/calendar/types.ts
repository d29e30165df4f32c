// What the calendar reads from the API: events (/api/boxes/:id/events, /api/events) and
// bookings (/api/bookings…). Times are ISO 8601 with the facility zone's offset.
import type { BookingStatus } from '$lib/domain/bookings';
import type { CalendarEvent } from '$lib/domain/calendar-event';
import { formatRange } from '$lib/domain/time';

export type Reason = { code: string; message: string };

export type ApiEvent = CalendarEvent;

export type ApiBooking = {
	id: number;
	boxId: number;
	start: string;
	end: string;
	purgeUntil: string | null;
	purpose: string;
	status: BookingStatus;
	seriesId: number | null;
};

export type SeriesRefusal = { start: string; end: string; reasons: Reason[] };

/** A box as the calendar's pickers show it. */
export type PickerBox = {
	id: number;
	name: string;
	gas: string;
	/** Why this person cannot book it; empty when they can. */
	blockers: string[];
};

/** An event the details panel shows: the API's, with a booking's answer folded in. */
export function withBooking(e: ApiEvent, b: ApiBooking): ApiEvent {
	return {
		...e,
		start: b.start,
		end: b.end,
		status: b.status,
		kind: b.status === 'pending' ? 'pending' : 'booking',
		booking: e.booking && { ...e.booking, purpose: b.purpose, purgeUntil: b.purgeUntil }
	};
}

/** "Wed 2 Dec, 10:00–12:00" for anything with ISO start and end, in the facility zone. */
export const rangeText = (x: { start: string; end: string }, tz: string) =>
	formatRange(new Date(x.start), new Date(x.end), tz);
