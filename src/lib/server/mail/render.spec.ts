import { afterEach, describe, expect, it, vi } from 'vitest';
import type { Message } from './messages';

// Fixed settings, whatever the environment running the tests says (FACILITY_TZ, ORIGIN…).
vi.mock('../config', () => ({
	config: {
		facilityTz: 'Europe/Berlin',
		origin: 'https://boxes.example.org',
		facilityName: 'Glovebox Lab',
		facilityContact: 'manager@example.org'
	}
}));
const messages = await import('./messages');
const training = await import('./training-messages');
const { renderRow } = await import('./render');
const {
	bookingCancelled,
	bookingConfirmed,
	bookingNoShow,
	invitation,
	passwordReset,
	staffNotice
} = messages;
const { renderMessage } = messages;

// 07:00Z on the day Berlin moves to summer time is 09:00 there.
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
/** A whole row, as callers pass it: only what the message needs may reach the outbox. */
const person = { id: 7, email: 'ada@example.org', name: 'Ada <Lovelace> & Co' };
const escapedName = 'Ada &lt;Lovelace&gt; &amp; Co';

/** The outbox row a message is queued as, through JSON as the database keeps it. */
function rowOf(message: Message) {
	const { template, data } = JSON.parse(JSON.stringify(message)) as Message;
	return { template, data, textBody: null, htmlBody: null, icsMethod: null, icsBody: null };
}

/** Renders a queued message as the worker does, and checks that a resend gives the same bytes. */
function render(message: Message) {
	const row = rowOf(message);
	const first = renderRow(row);
	expect(renderRow(row)).toEqual(first);
	return first;
}

/** The content lines of a calendar, unfolded (RFC 5545 3.1). */
const lines = (ics: string | undefined) => (ics ?? '').replace(/\r\n[ \t]/g, '').split('\r\n');

afterEach(() => vi.useRealTimers());

describe('booking messages', () => {
	it('keep the agreed data: the booking’s fields at $.booking, the person’s name, ISO dates', () => {
		const data = JSON.parse(bookingConfirmed(booking, person).data);
		expect(data).toEqual({
			booking: {
				id: 42,
				startAt: '2026-03-29T07:00:00.000Z',
				endAt: '2026-03-29T09:30:00.000Z',
				sequence: 2,
				boxName: 'Box A',
				room: 'B 1.04',
				purpose: 'Grignard set-up',
				stamp: '2026-03-20T16:05:09.750Z'
			},
			person: { name: person.name }
		});
	});

	it('confirmed: the slot in the facility zone, an escaped name, a REQUEST invite', () => {
		const message = bookingConfirmed(booking, person);
		expect(message.subject).toBe('Booked: Box A, Sun 29 Mar, 09:00–11:30');
		const mail = render(message);
		expect(mail.text).toBe(
			[
				'Hello Ada <Lovelace> & Co,',
				'you have Box A (room B 1.04) on Sun 29 Mar, 09:00–11:30 for: Grignard set-up.',
				'Your bookings: https://boxes.example.org/bookings'
			].join('\n')
		);
		expect(mail.html).toContain(`<p>Hello ${escapedName},</p>`);
		expect(mail.html).not.toContain('<Lovelace>');
		expect(mail.icsMethod).toBe('REQUEST');
		const ics = lines(mail.ics);
		expect(ics).toEqual(
			expect.arrayContaining([
				'METHOD:REQUEST',
				'UID:booking-42@boxwright',
				'SEQUENCE:2',
				'STATUS:CONFIRMED',
				'DTSTAMP:20260320T160509Z',
				'DTSTART:20260329T070000Z',
				'DTEND:20260329T093000Z'
			])
		);
	});

	it('fixes DTSTAMP when queued, so a later send renders the same calendar', () => {
		vi.useFakeTimers({ now: new Date('2026-03-21T08:00:00Z') });
		const message = bookingConfirmed({ ...booking, updatedAt: undefined }, person);
		vi.setSystemTime(new Date('2026-03-21T09:30:00Z'));
		expect(lines(render(message).ics)).toContain('DTSTAMP:20260321T080000Z');
	});

	it('renders the booking another module set with JSON_SET(data, "$.booking.id", …)', () => {
		const message = bookingConfirmed({ ...booking, id: 0 }, person);
		const data = JSON.parse(message.data);
		data.booking.id = 77;
		const mail = render({ ...message, data: JSON.stringify(data) });
		expect(lines(mail.ics)).toContain('UID:booking-77@boxwright');
	});

	it('a change keeps rendering after the caller renames it (kind, subject)', () => {
		const message = bookingConfirmed({ ...booking, sequence: 3 }, person);
		message.kind = 'booking_changed';
		message.subject = 'Changed: Box A, Sun 29 Mar, 09:00–11:30';
		expect(lines(render(message).ics)).toContain('SEQUENCE:3');
	});

	it('cancelled: the reason, the alternatives and rebooking, and a CANCEL', () => {
		const alternatives = [
			{
				start: new Date('2026-03-30T07:00:00Z'),
				end: new Date('2026-03-30T09:30:00Z'),
				boxName: 'Box <B>'
			}
		];
		const message = bookingCancelled(booking, person, 'Purifier regeneration', alternatives);
		expect(message.subject).toBe('Cancelled: Box A, Sun 29 Mar, 09:00–11:30');
		const mail = render(message);
		expect(mail.text).toBe(
			[
				'Hello Ada <Lovelace> & Co,',
				'your booking of Box A (room B 1.04) on Sun 29 Mar, 09:00–11:30 has been cancelled.',
				'Reason: Purifier regeneration',
				'Free slots of the same length you could take instead:',
				'  - Box <B>, Mon 30 Mar, 09:00–11:30',
				'Rebook: https://boxes.example.org/bookings',
				'Questions: manager@example.org'
			].join('\n')
		);
		expect(mail.html).toContain(`<p>Hello ${escapedName},</p>`);
		expect(mail.html).toContain('Box &lt;B&gt;, Mon 30 Mar, 09:00–11:30');
		expect(mail.icsMethod).toBe('CANCEL');
		expect(lines(mail.ics)).toEqual(
			expect.arrayContaining([
				'METHOD:CANCEL',
				'UID:booking-42@boxwright',
				'SEQUENCE:2',
				'STATUS:CANCELLED',
				'DESCRIPTION:Purifier regeneration'
			])
		);
	});

	it('cancelled for a deactivated account: no rebooking', () => {
		const message = bookingCancelled(booking, person, 'Account deactivated', [], {
			rebook: false
		});
		const mail = render(message);
		expect(mail.text).not.toContain('Rebook');
		expect(mail.html).not.toContain('Rebook');
		expect(mail.html).toContain('<p>Questions to manager@example.org</p>');
	});

	it('no-show: the grace period and a CANCEL', () => {
		const message = bookingNoShow({ ...booking, sequence: 3 }, person, 15);
		expect(message.subject).toBe('No-show: Box A, Sun 29 Mar, 09:00–11:30');
		const mail = render(message);
		expect(mail.text).toContain(
			'nobody checked in to your booking of Box A (room B 1.04) on Sun 29 Mar, 09:00–11:30 within 15 minutes of its start'
		);
		expect(mail.html).toContain(`<p>Hello ${escapedName},</p>`);
		expect(mail.icsMethod).toBe('CANCEL');
		expect(lines(mail.ics)).toEqual(
			expect.arrayContaining(['METHOD:CANCEL', 'UID:booking-42@boxwright', 'SEQUENCE:3'])
		);
	});
});

describe('messages without a calendar', () => {
	it('staff notice: the body and the link, under any kind', () => {
		const message = {
			...staffNotice('O2 alarm', 'Box A reads 12 ppm O2 <high> & rising', '/boxes/3'),
			kind: 'watch_freed'
		};
		expect(message.subject).toBe('O2 alarm');
		const mail = render(message);
		expect(mail.text).toBe(
			'Box A reads 12 ppm O2 <high> & rising\n\nhttps://boxes.example.org/boxes/3'
		);
		expect(mail.html).toContain('<p>Box A reads 12 ppm O2 &lt;high&gt; &amp; rising</p>');
		expect(mail.html).toContain('<a href="https://boxes.example.org/boxes/3">');
		expect(mail.ics).toBeUndefined();
		expect(mail.icsMethod).toBeUndefined();
	});

	it('password reset: the link and its expiry on the facility clock', () => {
		const link = 'https://boxes.example.org/reset/abc';
		const message = passwordReset(person, link, new Date('2026-03-20T17:05:00Z'));
		expect(message.subject).toBe('Reset your Boxwright password');
		expect(JSON.parse(message.data).person).toEqual({ name: person.name });
		const mail = render(message);
		expect(mail.text).toContain('Hello Ada <Lovelace> & Co,');
		expect(mail.text).toContain(`Choose a new password here: ${link}`);
		expect(mail.text).toContain('The link works once, until Fri 20 Mar, 18:05.');
		expect(mail.text).toContain('your Glovebox Lab Boxwright account');
		expect(mail.html).toContain(`<p>Hello ${escapedName},</p>`);
		expect(mail.html).toContain(`<a href="${link}">Choose a new password</a>`);
	});

	it('invitation: who invites, as what, into which group, until when', () => {
		const message = invitation(person, {
			by: 'Bob & Eve',
			role: 'member',
			groupName: 'Organometallics',
			link: 'https://boxes.example.org/invite/xyz',
			expiresAt: new Date('2026-04-03T15:00:00Z')
		});
		expect(message.subject).toBe('You are invited to Boxwright (Glovebox Lab)');
		const mail = render(message);
		expect(mail.text).toContain(
			'Bob & Eve has invited you to Boxwright, where Glovebox Lab books its glove boxes, as member in the group Organometallics.'
		);
		expect(mail.text).toContain('until Fri 3 Apr, 17:00.');
		expect(mail.html).toContain(`<p>Hello ${escapedName},</p>`);
		expect(mail.html).toContain('Bob &amp; Eve has invited you');
	});
});

describe('training messages', () => {
	const cases = [
		{
			notice: training.trainingRequested({
				to: 'Tess <Trainer>',
				person: 'Ada',
				module: 'Glove box basics',
				note: 'Before May & soon'
			}),
			says: ['Ada asks to be trained in “Glove box basics”.', 'Their note: “Before May & soon”'],
			link: 'Open requests: https://boxes.example.org/manage/training#requests'
		},
		{
			notice: training.certificationGranted({
				to: 'Tess <Trainer>',
				module: 'Glove box basics',
				expiresAt: new Date('2027-03-20T12:00:00Z'),
				bookable: ['Box A', 'Box B']
			}),
			says: ['until Sat 20 Mar 2027.', 'You can now book Box A, Box B.'],
			link: 'Book time: https://boxes.example.org/calendar'
		},
		{
			notice: training.trainingDeclined({
				to: 'Tess <Trainer>',
				module: 'Glove box basics',
				by: 'Bob',
				reason: 'Book the theory session first'
			}),
			says: ['Bob declined your request', 'Reason: Book the theory session first'],
			link: 'Your training: https://boxes.example.org/training'
		},
		{
			notice: training.certificationExpiring({
				to: 'Tess <Trainer>',
				module: 'Glove box basics',
				expiresAt: new Date('2027-03-20T12:00:00Z'),
				daysLeft: 7
			}),
			says: ['expires on Sat 20 Mar 2027, in 7 days.'],
			link: 'Ask for a renewal: https://boxes.example.org/training'
		}
	];

	it.each(cases)('$notice.message.kind: the in-app words, a greeting and the link', (c) => {
		const mail = render(c.notice.message);
		expect(mail.text.startsWith('Hello Tess <Trainer>,\n\n')).toBe(true);
		for (const words of c.says) {
			expect(mail.text).toContain(words);
			expect(c.notice.inApp.body).toContain(words);
		}
		expect(mail.text.endsWith(c.link)).toBe(true);
		expect(mail.html).toContain('<p>Hello Tess &lt;Trainer&gt;,</p>');
		expect(mail.html).toContain('questions to manager@example.org');
		expect(mail.ics).toBeUndefined();
	});
});

describe('renderMessage', () => {
	it('refuses a template it does not know, naming it', () => {
		expect(() => renderMessage('booking_teleported', '{}')).toThrow(
			'unknown mail template: booking_teleported'
		);
		expect(() => renderMessage('toString', '{}')).toThrow('unknown mail template: toString');
	});

	it('refuses data that is not JSON without quoting it (errors are logged)', () => {
		expect(() => renderMessage('password_reset', '{"link":"https://x.org/reset/s3cret"')).toThrow(
			/^the data of mail template password_reset is not JSON$/
		);
	});
});

describe('renderRow', () => {
	it('sends a row queued before rendering moved to the worker as it was stored', () => {
		const old = {
			template: null,
			data: null,
			textBody: 'Hello',
			htmlBody: '<p>Hello</p>',
			icsMethod: 'CANCEL',
			icsBody: 'BEGIN:VCALENDAR'
		};
		expect(renderRow(old)).toEqual({
			text: 'Hello',
			html: '<p>Hello</p>',
			icsMethod: 'CANCEL',
			ics: 'BEGIN:VCALENDAR'
		});
		expect(renderRow({ ...old, icsMethod: null, icsBody: null })).toEqual({
			text: 'Hello',
			html: '<p>Hello</p>'
		});
	});

	it('prefers the template to any stored body, and refuses a row with neither', () => {
		const row = rowOf(staffNotice('T', 'Fresh', '/x'));
		expect(renderRow({ ...row, textBody: 'Stale', htmlBody: '<p>Stale</p>' }).text).toBe(
			'Fresh\n\nhttps://boxes.example.org/x'
		);
		expect(() => renderRow({ ...row, template: null, data: null })).toThrow(
			'outbox row has neither a template nor a body'
		);
	});
});
