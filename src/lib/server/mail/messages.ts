// The words of Boxwright's e-mails. A builder runs when a message is queued: it fixes the
// subject and keeps what the message needs (its template's data, as JSON) in the outbox row.
// The outbox worker renders the text, the HTML and any calendar part from that data when it
// sends (renderMessage), so a request that holds a lock spends no time on them.
import { formatDateTime, formatRange } from '$lib/domain/time';
import { config } from '../config';
import { bookingInvite, type IcsBooking } from '../ical';

export type Message = {
	kind: string;
	subject: string;
	template: TemplateName;
	/** JSON text of the template's data (TemplateData), its dates as ISO strings. */
	data: string;
};

/** What an outbox row is sent as. */
export type Rendered = {
	text: string;
	html: string;
	icsMethod?: 'REQUEST' | 'CANCEL';
	ics?: string;
};

type Person = { name: string };

/**
 * A booking as its messages keep it. `stamp` is the calendar part's DTSTAMP, fixed when the
 * message is queued, so that rendering it again gives the same bytes.
 */
type BookingDraft = Omit<IcsBooking, 'updatedAt'> & { stamp: Date };

/** Other SQL queues a confirmation with JSON_SET(data, '$.booking.id', …): keep this shape. */
type BookingData = { booking: BookingDraft; person: Person };

type Alternative = { start: Date; end: Date; boxName: string };

type Invite = { by: string; role: string; groupName: string | null; link: string; expiresAt: Date };

/** A greeting, paragraphs and one link: training's messages (training-messages.ts). */
export type NoticeData = { to: string; paragraphs: string[]; link: string; linkText: string };

/** Each template's data as its builder gives it. */
type TemplateData = {
	booking_confirmed: BookingData;
	booking_cancelled: BookingData & {
		reason: string;
		alternatives: Alternative[];
		/** Off when the person can no longer book (their account was deactivated). */
		rebook: boolean;
	};
	booking_no_show: BookingData & { graceMin: number };
	staff_notice: { body: string; link: string };
	password_reset: { person: Person; link: string; expiresAt: Date };
	invitation: { person: Person; invite: Invite };
	notice: NoticeData;
};

export type TemplateName = keyof TemplateData;

/** What JSON makes of T: its dates come back as ISO strings. */
type Stored<T> = T extends Date
	? string
	: T extends (infer U)[]
		? Stored<U>[]
		: T extends object
			? { [K in keyof T]: Stored<T[K]> }
			: T;

/** The calendar part's METHOD of the templates that carry one: known when queued. */
const calendarMethods = {
	booking_confirmed: 'REQUEST',
	booking_cancelled: 'CANCEL',
	booking_no_show: 'CANCEL'
} as const satisfies Partial<Record<TemplateName, 'REQUEST' | 'CANCEL'>>;

/** The METHOD an outbox row's calendar part will have, or null when it has none. */
export function icsMethodOf(template: TemplateName): 'REQUEST' | 'CANCEL' | null {
	return template in calendarMethods
		? calendarMethods[template as keyof typeof calendarMethods]
		: null;
}

/** A message of `template`: its subject fixed now, its data kept for the worker to render. */
export function draft<N extends TemplateName>(
	template: N,
	kind: string,
	subject: string,
	data: TemplateData[N]
): Message {
	return { kind, subject, template, data: JSON.stringify(data) };
}

/** Text made safe to stand in an e-mail's HTML. */
const escape = (s: string) =>
	s.replace(
		/[&<>"']/g,
		(c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!
	);

/** An e-mail's HTML body: one paragraph each, already escaped where they hold text. */
function html(paragraphs: string[]): string {
	return `<!doctype html><html><body style="font-family:sans-serif;color:#161c25">${paragraphs
		.map((p) => `<p>${p}</p>`)
		.join('')}</body></html>`;
}

const whenOf = (b: { startAt: Date; endAt: Date }) =>
	formatRange(b.startAt, b.endAt, config.facilityTz);

/**
 * The fields of `booking` a message keeps (callers pass whole rows), with the DTSTAMP of
 * bookingInvite: the booking's last change, else now.
 */
function bookingDraft(booking: IcsBooking): BookingDraft {
	const { id, startAt, endAt, sequence, boxName, room, purpose } = booking;
	return {
		id,
		startAt,
		endAt,
		sequence,
		boxName,
		room,
		purpose,
		stamp: booking.updatedAt ?? new Date()
	};
}

function revivedBooking(b: Stored<BookingDraft>): BookingDraft {
	return { ...b, startAt: new Date(b.startAt), endAt: new Date(b.endAt), stamp: new Date(b.stamp) };
}

function calendarPart(b: BookingDraft, method: 'REQUEST' | 'CANCEL', note?: string) {
	return { icsMethod: method, ics: bookingInvite({ ...b, updatedAt: b.stamp }, method, note) };
}

export function bookingCancelled(
	booking: IcsBooking,
	person: Person,
	reason: string,
	alternatives: Alternative[] = [],
	/** Off when the person can no longer book (their account was deactivated). */
	{ rebook = true }: { rebook?: boolean } = {}
): Message {
	return draft(
		'booking_cancelled',
		'booking_cancelled',
		`Cancelled: ${booking.boxName}, ${whenOf(booking)}`,
		{
			booking: bookingDraft(booking),
			person: { name: person.name },
			reason,
			alternatives: alternatives.map(({ start, end, boxName }) => ({ start, end, boxName })),
			rebook
		}
	);
}

function renderCancelled(d: Stored<TemplateData['booking_cancelled']>): Rendered {
	const booking = revivedBooking(d.booking);
	const when = whenOf(booking);
	const rebook = `${config.origin}/bookings`;
	const slots = d.alternatives.map((a) => ({
		boxName: a.boxName,
		when: formatRange(new Date(a.start), new Date(a.end), config.facilityTz)
	}));
	const lines = [
		`Hello ${d.person.name},`,
		`your booking of ${booking.boxName} (room ${booking.room}) on ${when} has been cancelled.`,
		`Reason: ${d.reason}`,
		...(slots.length
			? [
					'Free slots of the same length you could take instead:',
					...slots.map((s) => `  - ${s.boxName}, ${s.when}`)
				]
			: []),
		...(d.rebook ? [`Rebook: ${rebook}`] : []),
		`Questions: ${config.facilityContact}`
	];
	return {
		text: lines.join('\n'),
		html: html([
			`Hello ${escape(d.person.name)},`,
			`your booking of <strong>${escape(booking.boxName)}</strong> (room ${escape(booking.room)}) on <strong>${escape(when)}</strong> has been cancelled.`,
			`Reason: ${escape(d.reason)}`,
			...(slots.length
				? [
						'Free slots of the same length you could take instead:<br>' +
							slots.map((s) => `${escape(s.boxName)}, ${escape(s.when)}`).join('<br>')
					]
				: []),
			d.rebook
				? `<a href="${escape(rebook)}">Rebook in Boxwright</a> · questions to ${escape(config.facilityContact)}`
				: `Questions to ${escape(config.facilityContact)}`
		]),
		...calendarPart(booking, calendarMethods.booking_cancelled, d.reason)
	};
}

export function bookingConfirmed(booking: IcsBooking, person: Person): Message {
	return draft(
		'booking_confirmed',
		'booking_confirmed',
		`Booked: ${booking.boxName}, ${whenOf(booking)}`,
		{
			booking: bookingDraft(booking),
			person: { name: person.name }
		}
	);
}

function renderConfirmed(d: Stored<TemplateData['booking_confirmed']>): Rendered {
	const booking = revivedBooking(d.booking);
	const when = whenOf(booking);
	return {
		text: [
			`Hello ${d.person.name},`,
			`you have ${booking.boxName} (room ${booking.room}) on ${when} for: ${booking.purpose}.`,
			`Your bookings: ${config.origin}/bookings`
		].join('\n'),
		html: html([
			`Hello ${escape(d.person.name)},`,
			`you have <strong>${escape(booking.boxName)}</strong> (room ${escape(booking.room)}) on <strong>${escape(when)}</strong> for: ${escape(booking.purpose)}.`,
			`<a href="${escape(config.origin)}/bookings">Your bookings</a>`
		]),
		...calendarPart(booking, calendarMethods.booking_confirmed)
	};
}

/** The booker did not check in: the booking is a no-show and the rest of the slot is free. */
export function bookingNoShow(booking: IcsBooking, person: Person, graceMin: number): Message {
	return draft(
		'booking_no_show',
		'booking_no_show',
		`No-show: ${booking.boxName}, ${whenOf(booking)}`,
		{
			booking: bookingDraft(booking),
			person: { name: person.name },
			graceMin
		}
	);
}

function renderNoShow(d: Stored<TemplateData['booking_no_show']>): Rendered {
	const booking = revivedBooking(d.booking);
	const lines = [
		`Hello ${d.person.name},`,
		`nobody checked in to your booking of ${booking.boxName} (room ${booking.room}) on ${whenOf(booking)} within ${d.graceMin} minutes of its start, so it is recorded as a no-show and the rest of the time is free for others.`,
		'A no-show is billed as booked. If you were at the box, tell the facility manager so the record can be put right.',
		`Questions: ${config.facilityContact}`
	];
	return {
		text: lines.join('\n'),
		html: html(lines.map(escape)),
		...calendarPart(booking, calendarMethods.booking_no_show)
	};
}

/** A plain notice to facility staff (alarms, damaged gloves). */
export function staffNotice(title: string, body: string, link: string): Message {
	return draft('staff_notice', 'staff_notice', title, { body, link });
}

function renderStaffNotice(d: Stored<TemplateData['staff_notice']>): Rendered {
	const url = `${config.origin}${d.link}`;
	return {
		text: `${d.body}\n\n${url}`,
		html: html([escape(d.body), `<a href="${escape(url)}">Open in Boxwright</a>`])
	};
}

/** How a date reads in account e-mails: "Tue 1 Dec, 09:00" on the facility's clock. */
const untilWhen = (at: string) => formatDateTime(new Date(at), config.facilityTz);

/** A password reset link: single use, valid for an hour; harmless to ignore. */
export function passwordReset(person: Person, link: string, expiresAt: Date): Message {
	return draft('password_reset', 'password_reset', 'Reset your Boxwright password', {
		person: { name: person.name },
		link,
		expiresAt
	});
}

function renderPasswordReset(d: Stored<TemplateData['password_reset']>): Rendered {
	const until = untilWhen(d.expiresAt);
	return {
		text: [
			`Hello ${d.person.name},`,
			`someone (we hope you) asked to reset the password of your ${config.facilityName} Boxwright account.`,
			`Choose a new password here: ${d.link}`,
			`The link works once, until ${until}. Setting a new password signs you out everywhere.`,
			'If you did not ask for this, ignore this e-mail: your password stays as it is.',
			`Questions: ${config.facilityContact}`
		].join('\n'),
		html: html([
			`Hello ${escape(d.person.name)},`,
			`someone (we hope you) asked to reset the password of your ${escape(config.facilityName)} Boxwright account.`,
			`<a href="${escape(d.link)}">Choose a new password</a>`,
			`The link works once, until ${escape(until)}. Setting a new password signs you out everywhere.`,
			'If you did not ask for this, ignore this e-mail: your password stays as it is.',
			`Questions to ${escape(config.facilityContact)}`
		])
	};
}

/** An invitation to an account an admin prepared: the person chooses their password. */
export function invitation(person: Person, invite: Invite): Message {
	const { by, role, groupName, link, expiresAt } = invite;
	return draft(
		'invitation',
		'invitation',
		`You are invited to Boxwright (${config.facilityName})`,
		{
			person: { name: person.name },
			invite: { by, role, groupName, link, expiresAt }
		}
	);
}

function renderInvitation(d: Stored<TemplateData['invitation']>): Rendered {
	const { invite } = d;
	const joining = invite.groupName ? ` in the group ${invite.groupName}` : '';
	const until = untilWhen(invite.expiresAt);
	return {
		text: [
			`Hello ${d.person.name},`,
			`${invite.by} has invited you to Boxwright, where ${config.facilityName} books its glove boxes, as ${invite.role}${joining}.`,
			`Choose your password to start: ${invite.link}`,
			`The link works once, until ${until}. After that, ask for a new invitation.`,
			`Questions: ${config.facilityContact}`
		].join('\n'),
		html: html([
			`Hello ${escape(d.person.name)},`,
			`${escape(invite.by)} has invited you to Boxwright, where ${escape(config.facilityName)} books its glove boxes, as ${escape(invite.role)}${escape(joining)}.`,
			`<a href="${escape(invite.link)}">Choose your password</a>`,
			`The link works once, until ${escape(until)}. After that, ask for a new invitation.`,
			`Questions to ${escape(config.facilityContact)}`
		])
	};
}

function renderNotice(d: NoticeData): Rendered {
	const url = `${config.origin}${d.link}`;
	return {
		text: [`Hello ${d.to},`, ...d.paragraphs, `${d.linkText}: ${url}`].join('\n\n'),
		html: html([
			`Hello ${escape(d.to)},`,
			...d.paragraphs.map(escape),
			`<a href="${escape(url)}">${escape(d.linkText)}</a> · questions to ${escape(config.facilityContact)}`
		])
	};
}

const renderers: { [N in TemplateName]: (data: Stored<TemplateData[N]>) => Rendered } = {
	booking_confirmed: renderConfirmed,
	booking_cancelled: renderCancelled,
	booking_no_show: renderNoShow,
	staff_notice: renderStaffNotice,
	password_reset: renderPasswordReset,
	invitation: renderInvitation,
	notice: renderNotice
};

/**
 * The e-mail an outbox row's template and data stand for. Throws on an unknown template or
 * data that is not JSON; the message names neither the data nor any part of it, since the
 * worker stores it and logs it (a reset link must not end up in a log).
 */
export function renderMessage(template: string, data: string): Rendered {
	if (!Object.hasOwn(renderers, template)) throw new Error(`unknown mail template: ${template}`);
	let parsed: unknown;
	try {
		parsed = JSON.parse(data);
	} catch {
		throw new Error(`the data of mail template ${template} is not JSON`);
	}
	return renderers[template as TemplateName](parsed as never);
}
