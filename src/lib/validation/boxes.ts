import { z } from 'zod';
import { chemicalClassKeys, gases } from '$lib/domain/boxes';
import { LONGEST_BOOKING_MS, LONGEST_PURGE_MS } from '$lib/domain/bookings';
import { numberFromText } from '$lib/domain/inputs';
import { MINUTES_PER_WEEK, minutesFromHours } from '$lib/domain/time';
import { MAX_RATE } from '$lib/domain/usage';

const minutes = (label: string, min: number, max: number) =>
	z.coerce
		.number({ error: `Enter ${label} in minutes.` })
		.int(`Enter ${label} in whole minutes.`)
		.min(min, `${label[0].toUpperCase()}${label.slice(1)} must be at least ${min} min.`)
		.max(max, `${label[0].toUpperCase()}${label.slice(1)} must be at most ${max} min.`);

/**
 * A length entered in hours, decimals allowed ("12", "7.5", "7,5"), kept as whole minutes:
 * the weekly quota, which people think of in hours and the rules count in minutes.
 */
const hoursAsMinutes = (label: string, maxMinutes: number) =>
	z
		.preprocess(
			(v) => (typeof v === 'string' ? numberFromText(v) : v),
			z
				.number({ error: `Enter ${label} in hours, e.g. 12 or 7.5.` })
				.min(0, `${label[0].toUpperCase()}${label.slice(1)} cannot be negative.`)
				.max(
					maxMinutes / 60,
					`${label[0].toUpperCase()}${label.slice(1)} must be at most ${maxMinutes / 60} h.`
				)
		)
		.transform(minutesFromHours);

const ppm = (label: string) =>
	z.coerce
		.number({ error: `Enter the ${label} in ppm.` })
		.min(0, `The ${label} cannot be negative.`)
		.max(100_000, `The ${label} is implausibly high.`);

const rate = z.coerce
	.number({ error: 'Enter an hourly rate.' })
	.min(0, 'A rate cannot be below zero.')
	.max(MAX_RATE, 'That rate is implausibly high.');

export const portSchema = z.object({
	/** An existing port's id, so an edit keeps it (and its gloves); absent for a new port. */
	id: z.coerce.number().int().positive().optional(),
	position: z.string().trim().min(1, 'Name the port’s position.').max(40),
	diameterMm: z.coerce
		.number({ error: 'Enter the port diameter in mm.' })
		.int('Enter the diameter in whole mm.')
		.min(50, 'A port is at least 50 mm across.')
		.max(400, 'A port is at most 400 mm across.')
});

export const boxSchema = z
	.object({
		name: z.string().trim().min(1, 'Name the box.').max(80, 'Use at most 80 characters.'),
		room: z.string().trim().min(1, 'Say which room the box is in.').max(80),
		gas: z.enum(gases, { error: 'Choose argon or nitrogen.' }),
		volumeL: z.coerce
			.number({ error: 'Enter the internal volume in litres.' })
			.int('Enter whole litres.')
			.min(50, 'A glove box holds at least 50 L.')
			.max(20_000, 'That volume is implausibly large.'),
		description: z.string().trim().max(2000).optional().default(''),
		status: z.enum(['in_service', 'out_of_service']).default('in_service'),
		o2WarnPpm: ppm('O₂ warn level'),
		o2AlarmPpm: ppm('O₂ alarm level'),
		h2oWarnPpm: ppm('H₂O warn level'),
		h2oAlarmPpm: ppm('H₂O alarm level'),
		rateInternal: rate,
		rateExternal: rate,
		slotStepMin: minutes('the slot step', 5, 240),
		minLengthMin: minutes('the shortest booking', 5, 1440),
		maxLengthMin: minutes('the longest booking', 5, LONGEST_BOOKING_MS / 60_000),
		horizonDays: z.coerce
			.number()
			.int()
			.min(1, 'At least 1 day ahead.')
			.max(365, 'At most a year ahead.'),
		/** Entered in hours; the box keeps minutes (weeklyQuotaMin, below). */
		weeklyQuotaHours: hoursAsMinutes('the weekly quota', MINUTES_PER_WEEK),
		purgeMin: minutes('the purge time', 0, LONGEST_PURGE_MS / 60_000),
		needsApproval: z.coerce.boolean().default(false),
		requiredLeakClass: z.coerce
			.number({ error: 'Choose a leak-tightness class.' })
			.int()
			.min(1, 'Choose class 1 to 4.')
			.max(4, 'Choose class 1 to 4.')
			.default(3),
		gloveChangeNeedsProof: z.coerce.boolean().default(false),
		cancelWindowHours: z.coerce
			.number({ error: 'Give the cancellation window in hours.' })
			.int('Give whole hours.')
			.min(0, 'The window cannot be negative.')
			.max(720, 'At most 30 days.')
			.default(24),
		noShowGraceMin: minutes('the check-in grace time', 5, 240).default(15),
		excludedClasses: z.array(z.enum(chemicalClassKeys as [string, ...string[]])).default([]),
		requiredModuleIds: z.array(z.coerce.number().int().positive()).default([]),
		ports: z
			.array(portSchema)
			.max(12, 'At most 12 ports.')
			.default([])
			.refine(
				(ports) => {
					const ids = ports.flatMap((p) => (p.id === undefined ? [] : [p.id]));
					return new Set(ids).size === ids.length;
				},
				{ message: 'Each port appears once.' }
			)
	})
	.superRefine((v, ctx) => {
		if (v.o2AlarmPpm < v.o2WarnPpm)
			ctx.addIssue({
				code: 'custom',
				path: ['o2AlarmPpm'],
				message: 'The alarm level must be at or above the warn level.'
			});
		if (v.h2oAlarmPpm < v.h2oWarnPpm)
			ctx.addIssue({
				code: 'custom',
				path: ['h2oAlarmPpm'],
				message: 'The alarm level must be at or above the warn level.'
			});
		if (v.maxLengthMin < v.minLengthMin)
			ctx.addIssue({
				code: 'custom',
				path: ['maxLengthMin'],
				message: 'The longest booking must be at least the shortest.'
			});
		if (v.minLengthMin % v.slotStepMin !== 0)
			ctx.addIssue({
				code: 'custom',
				path: ['minLengthMin'],
				message: 'Use a multiple of the slot step.'
			});
		if (v.maxLengthMin % v.slotStepMin !== 0)
			ctx.addIssue({
				code: 'custom',
				path: ['maxLengthMin'],
				message: 'Use a multiple of the slot step.'
			});
	})
	.transform(({ weeklyQuotaHours, ...v }) => ({ ...v, weeklyQuotaMin: weeklyQuotaHours }));

export type BoxInput = z.output<typeof boxSchema>;

/** Reads the box form (repeated port fields, checkboxes) into the schema's shape. */
export function boxFormToInput(form: FormData): Record<string, unknown> {
	// A port's fields come in rows of three, in order: its id (empty for a new one), position, diameter.
	const ids = form.getAll('portId').map(String);
	const positions = form.getAll('portPosition').map(String);
	const diameters = form.getAll('portDiameterMm').map(String);
	const fields = Object.fromEntries(
		[...form.entries()].filter(
			([k]) =>
				![
					'portId',
					'portPosition',
					'portDiameterMm',
					'excludedClasses',
					'requiredModuleIds'
				].includes(k)
		)
	);
	return {
		...fields,
		needsApproval: form.get('needsApproval') === 'on',
		gloveChangeNeedsProof: form.get('gloveChangeNeedsProof') === 'on',
		excludedClasses: form.getAll('excludedClasses').map(String),
		requiredModuleIds: form.getAll('requiredModuleIds').map(String),
		ports: positions
			.map((position, i) => ({
				...(ids[i]?.trim() ? { id: ids[i].trim() } : {}),
				position,
				diameterMm: diameters[i] ?? ''
			}))
			.filter((p) => p.position.trim() !== '' || p.diameterMm.trim() !== '')
	};
}
