import ical, { ICalCalendarMethod, ICalEventStatus } from 'ical-generator';
import { config } from './config';

/** The UID a booking carries in every message and feed, so clients match them up. */
export function bookingUid(bookingId: number): string {
	return `booking-${bookingId}@boxwright`;
}

export type IcsBooking = {
	id: number;
	startAt: Date;
	endAt: Date;
	sequence: number;
	boxName: string;
	room: string;
	purpose: string;
	updatedAt?: Date;
};

/** A one-event calendar for an e-mail attachment (times in UTC, valid anywhere). */
export function bookingInvite(b: IcsBooking, method: 'REQUEST' | 'CANCEL', note?: string): string {
	const calendar = ical({
		prodId: { company: 'Boxwright', product: 'Boxwright', language: 'EN' },
		method: method === 'CANCEL' ? ICalCalendarMethod.CANCEL : ICalCalendarMethod.REQUEST
	});
	calendar.createEvent({
		id: bookingUid(b.id),
		sequence: b.sequence,
		start: b.startAt,
		end: b.endAt,
		stamp: b.updatedAt ?? new Date(),
		summary: `${b.boxName}: ${b.purpose}`,
		location: `${b.boxName}, room ${b.room}`,
		description: note ?? null,
		status: method === 'CANCEL' ? ICalEventStatus.CANCELLED : ICalEventStatus.CONFIRMED,
		organizer: { name: config.facilityName, email: config.facilityContact }
	});
	return calendar.toString();
}
