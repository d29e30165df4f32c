// The words of training's messages: a request to the trainers, its answer to the person,
// and the reminders before a certification expires. Each gives the e-mail and the in-app
// notice together, so the two always say the same.
import { formatDate } from '$lib/domain/time';
import { config } from '../config';
import { draft, type Message } from './messages';

export type Notice = { message: Message; inApp: { title: string; body: string; link: string } };

/** The e-mail keeps the in-app notice's paragraphs, so the worker renders the same words. */
function notice(
	kind: string,
	to: string,
	title: string,
	paragraphs: string[],
	link: string,
	linkText: string
): Notice {
	return {
		message: draft('notice', kind, title, { to, paragraphs, link, linkText }),
		inApp: { title, body: paragraphs.join(' '), link }
	};
}

const quoted = (note: string | null | undefined) => (note ? [`Their note: “${note}”`] : []);

/** To a trainer of the module (or, when it has none, a manager): someone asks to be trained. */
export function trainingRequested(p: {
	to: string;
	person: string;
	module: string;
	note?: string | null;
	noTrainer?: boolean;
}): Notice {
	return notice(
		'training_requested',
		p.to,
		`Training request: ${p.module}`,
		[
			`${p.person} asks to be trained in “${p.module}”.`,
			...quoted(p.note),
			p.noTrainer
				? 'Nobody teaches this module yet: appoint a trainer, or train and certify them yourself.'
				: 'Once you have trained them, record it; to say no, decline with a reason. Either way they are told.'
		],
		'/manage/training#requests',
		'Open requests'
	);
}

/** To the person: a certification was recorded, and what it lets them book now. */
export function certificationGranted(p: {
	to: string;
	module: string;
	expiresAt: Date;
	bookable: string[];
}): Notice {
	const until = formatDate(p.expiresAt, config.facilityTz);
	return notice(
		'certification_granted',
		p.to,
		`Certified: ${p.module}`,
		[
			`You are certified for “${p.module}” until ${until}.`,
			p.bookable.length
				? `You can now book ${p.bookable.join(', ')}.`
				: 'Some boxes need further modules before you can book them; the training page lists them.'
		],
		p.bookable.length ? '/calendar' : '/training',
		p.bookable.length ? 'Book time' : 'Your training'
	);
}

/** To the person: a trainer declined their request, and why. */
export function trainingDeclined(p: {
	to: string;
	module: string;
	by: string;
	reason: string;
}): Notice {
	return notice(
		'training_declined',
		p.to,
		`Training request declined: ${p.module}`,
		[
			`${p.by} declined your request for training in “${p.module}”.`,
			`Reason: ${p.reason}`,
			'You can ask again from the training page once that is sorted out.'
		],
		'/training',
		'Your training'
	);
}

/**
 * To the person, 30 and 7 days ahead: a certification they hold is about to expire.
 * `daysLeft` is whole days, rounded up.
 */
export function certificationExpiring(p: {
	to: string;
	module: string;
	expiresAt: Date;
	daysLeft: number;
}): Notice {
	const on = formatDate(p.expiresAt, config.facilityTz);
	return notice(
		'certification_expiring',
		p.to,
		`${p.module} expires ${on}`,
		[
			`Your certification for “${p.module}” expires on ${on}, in ${p.daysLeft === 1 ? 'a day' : `${p.daysLeft} days`}.`,
			'Bookings that end after that day will be refused. Ask a trainer for a renewal from the training page.'
		],
		'/training',
		'Ask for a renewal'
	);
}
