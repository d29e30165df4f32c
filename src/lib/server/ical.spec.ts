import { describe, expect, it } from 'vitest';
import { bookingInvite, bookingUid } from './ical';

const booking = {
	id: 42,
	startAt: new Date('2026-03-29T07:00:00Z'),
	endAt: new Date('2026-03-29T09:30:00Z'),
	sequence: 2,
	boxName: 'Box A',
	room: 'B 1.04',
	purpose: 'Grignard set-up',
	updatedAt: new Date('2026-03-20T16:05:09.750Z')
};

/** The content lines of a calendar, unfolded (RFC 5545 3.1). */
const lines = (text: string) => text.replace(/\r\n[ \t]/g, '').split('\r\n');

describe('bookingInvite', () => {
	// RFC 5545 3.8.7.1-3.8.7.3: DTSTAMP, LAST-MODIFIED and CREATED are UTC date-times.
	it('writes DTSTAMP (and any LAST-MODIFIED or CREATED) in UTC with a Z', () => {
		for (const method of ['REQUEST', 'CANCEL'] as const) {
			const text = lines(bookingInvite(booking, method));
			expect(text).toContain('DTSTAMP:20260320T160509Z');
			const stamped = text.filter((l) => /^(DTSTAMP|LAST-MODIFIED|CREATED)[;:]/.test(l));
			expect(stamped.length).toBeGreaterThan(0);
			for (const line of stamped) expect(line).toMatch(/^[A-Z-]+:\d{8}T\d{6}Z$/);
		}
	});

	it('gives start and end in UTC too, so the attachment needs no VTIMEZONE', () => {
		const text = lines(bookingInvite(booking, 'REQUEST'));
		expect(text).toContain('DTSTART:20260329T070000Z');
		expect(text).toContain('DTEND:20260329T093000Z');
		expect(text).not.toContain('BEGIN:VTIMEZONE');
	});

	it('carries the booking’s UID and SEQUENCE, and the method and status it was asked for', () => {
		const request = lines(bookingInvite(booking, 'REQUEST'));
		expect(request).toContain(`UID:${bookingUid(42)}`);
		expect(request).toContain('SEQUENCE:2');
		expect(request).toContain('METHOD:REQUEST');
		expect(request).toContain('STATUS:CONFIRMED');
		const cancel = lines(bookingInvite(booking, 'CANCEL', 'Purifier regeneration'));
		expect(cancel).toContain('METHOD:CANCEL');
		expect(cancel).toContain('STATUS:CANCELLED');
		expect(cancel).toContain('DESCRIPTION:Purifier regeneration');
	});
});
