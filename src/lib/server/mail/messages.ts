// The words of Boxwright's e-mails. Each builder returns what the outbox stores.
import { formatDateTime, formatRange } from '$lib/domain/time';
import { config } from '../config';
import { bookingInvite, type IcsBooking } from '../ical';

export type Message = {
	kind: string;
	subject: string;
	text: string;
	html: string;
	icsMethod?: 'REQUEST' | 'CANCEL';
	ics?: string;
};

/** Text made safe to stand in an e-mail's HTML. */
export const escape = (s: string) =>
	s.replace(
		/[&<>"']/g,
		(c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!
	);

/** An e-mail's HTML body: one paragraph each, already escaped where they hold text. */
export function html(paragraphs: string[]): string {
	return `<!doctype html><html><body style="font-family:sans-serif;color:#161c25">${paragraphs
		.map((p) => `<p>${p}</p>`)
		.join('')}</body></html>`;
}

type Person = { name: string };

export function bookingCancelled(
	booking: IcsBooking,
	person: Person,
	reason: string,
	alternatives: { start: Date; end: Date; boxName: string }[] = [],
	/** Off when the person can no longer book (their account was deactivated). */
	{ rebook: offerRebook = true }: { rebook?: boolean } = {}
): Message {
	const when = formatRange(booking.startAt, booking.endAt, config.facilityTz);
	const rebook = `${config.origin}/bookings`;
	const lines = [
		`Hello ${person.name},`,
		`your booking of ${booking.boxName} (room ${booking.room}) on ${when} has been cancelled.`,
		`Reason: ${reason}`,
		...(alternatives.length
			? [
					'Free slots of the same length you could take instead:',
					...alternatives.map(
						(a) => `  - ${a.boxName}, ${formatRange(a.start, a.end, config.facilityTz)}`
					)
				]
			: []),
		...(offerRebook ? [`Rebook: ${rebook}`] : []),
		`Questions: ${config.facilityContact}`
	];
	return {
		kind: 'booking_cancelled',
		subject: `Cancelled: ${booking.boxName}, ${when}`,
		text: lines.join('\n'),
		html: html([
			`Hello ${escape(person.name)},`,
			`your booking of <strong>${escape(booking.boxName)}</strong> (room ${escape(booking.room)}) on <strong>${escape(when)}</strong> has been cancelled.`,
			`Reason: ${escape(reason)}`,
			...(alternatives.length
				? [
						'Free slots of the same length you could take instead:<br>' +
							alternatives
								.map(
									(a) =>
										`${escape(a.boxName)}, ${escape(formatRange(a.start, a.end, config.facilityTz))}`
								)
								.join('<br>')
					]
				: []),
			offerRebook
				? `<a href="${escape(rebook)}">Rebook in Boxwright</a> · questions to ${escape(config.facilityContact)}`
				: `Questions to ${escape(config.facilityContact)}`
		]),
		icsMethod: 'CANCEL',
		ics: bookingInvite(booking, 'CANCEL', reason)
	};
}

export function bookingConfirmed(booking: IcsBooking, person: Person): Message {
	const when = formatRange(booking.startAt, booking.endAt, config.facilityTz);
	return {
		kind: 'booking_confirmed',
		subject: `Booked: ${booking.boxName}, ${when}`,
		text: [
			`Hello ${person.name},`,
			`you have ${booking.boxName} (room ${booking.room}) on ${when} for: ${booking.purpose}.`,
			`Your bookings: ${config.origin}/bookings`
		].join('\n'),
		html: html([
			`Hello ${escape(person.name)},`,
			`you have <strong>${escape(booking.boxName)}</strong> (room ${escape(booking.room)}) on <strong>${escape(when)}</strong> for: ${escape(booking.purpose)}.`,
			`<a href="${escape(config.origin)}/bookings">Your bookings</a>`
		]),
		icsMethod: 'REQUEST',
		ics: bookingInvite(booking, 'REQUEST')
	};
}

/** The booker did not check in: the booking is a no-show and the rest of the slot is free. */
export function bookingNoShow(booking: IcsBooking, person: Person, graceMin: number): Message {
	const when = formatRange(booking.startAt, booking.endAt, config.facilityTz);
	const lines = [
		`Hello ${person.name},`,
		`nobody checked in to your booking of ${booking.boxName} (room ${booking.room}) on ${when} within ${graceMin} minutes of its start, so it is recorded as a no-show and the rest of the time is free for others.`,
		'A no-show is billed as booked. If you were at the box, tell the facility manager so the record can be put right.',
		`Questions: ${config.facilityContact}`
	];
	return {
		kind: 'booking_no_show',
		subject: `No-show: ${booking.boxName}, ${when}`,
		text: lines.join('\n'),
		html: html(lines.map(escape)),
		icsMethod: 'CANCEL',
		ics: bookingInvite(booking, 'CANCEL')
	};
}

/** A plain notice to facility staff (alarms, damaged gloves). */
export function staffNotice(title: string, body: string, link: string): Message {
	const url = `${config.origin}${link}`;
	return {
		kind: 'staff_notice',
		subject: title,
		text: `${body}\n\n${url}`,
		html: html([escape(body), `<a href="${escape(url)}">Open in Boxwright</a>`])
	};
}

/** How a date reads in account e-mails: "Tue 1 Dec, 09:00" on the facility's clock. */
const untilWhen = (at: Date) => formatDateTime(at, config.facilityTz);

/** A password reset link: single use, valid for an hour; harmless to ignore. */
export function passwordReset(person: Person, link: string, expiresAt: Date): Message {
	const lines = [
		`Hello ${person.name},`,
		`someone (we hope you) asked to reset the password of your ${config.facilityName} Boxwright account.`,
		`Choose a new password here: ${link}`,
		`The link works once, until ${untilWhen(expiresAt)}. Setting a new password signs you out everywhere.`,
		'If you did not ask for this, ignore this e-mail: your password stays as it is.',
		`Questions: ${config.facilityContact}`
	];
	return {
		kind: 'password_reset',
		subject: 'Reset your Boxwright password',
		text: lines.join('\n'),
		html: html([
			`Hello ${escape(person.name)},`,
			`someone (we hope you) asked to reset the password of your ${escape(config.facilityName)} Boxwright account.`,
			`<a href="${escape(link)}">Choose a new password</a>`,
			`The link works once, until ${escape(untilWhen(expiresAt))}. Setting a new password signs you out everywhere.`,
			'If you did not ask for this, ignore this e-mail: your password stays as it is.',
			`Questions to ${escape(config.facilityContact)}`
		])
	};
}

/** An invitation to an account an admin prepared: the person chooses their password. */
export function invitation(
	person: Person,
	invite: { by: string; role: string; groupName: string | null; link: string; expiresAt: Date }
): Message {
	const joining = invite.groupName ? ` in the group ${invite.groupName}` : '';
	const lines = [
		`Hello ${person.name},`,
		`${invite.by} has invited you to Boxwright, where ${config.facilityName} books its glove boxes, as ${invite.role}${joining}.`,
		`Choose your password to start: ${invite.link}`,
		`The link works once, until ${untilWhen(invite.expiresAt)}. After that, ask for a new invitation.`,
		`Questions: ${config.facilityContact}`
	];
	return {
		kind: 'invitation',
		subject: `You are invited to Boxwright (${config.facilityName})`,
		text: lines.join('\n'),
		html: html([
			`Hello ${escape(person.name)},`,
			`${escape(invite.by)} has invited you to Boxwright, where ${escape(config.facilityName)} books its glove boxes, as ${escape(invite.role)}${escape(joining)}.`,
			`<a href="${escape(invite.link)}">Choose your password</a>`,
			`The link works once, until ${escape(untilWhen(invite.expiresAt))}. After that, ask for a new invitation.`,
			`Questions to ${escape(config.facilityContact)}`
		])
	};
}
