import { z } from 'zod';
import { maintenanceKinds } from '$lib/domain/upkeep';
import { isoDateTime } from './bookings';

const taskId = z.coerce.number({ error: 'Choose a task.' }).int().positive('Choose a task.');

/** A recurring task as a manager adds or edits it. */
export const taskSchema = z.strictObject({
	kind: z.enum(maintenanceKinds, { error: 'Choose a kind.' }),
	title: z
		.string({ error: 'Name the task (3–120 characters).' })
		.trim()
		.min(3, 'Name the task (3–120 characters).')
		.max(120, 'Use at most 120 characters.'),
	intervalDays: z.coerce
		.number({ error: 'Give the interval in days.' })
		.int('Give whole days.')
		.min(1, 'At least every day.')
		.max(3650, 'At most every ten years.'),
	outageMinutes: z.coerce
		.number({ error: 'Give the outage length in minutes (0 if none).' })
		.int('Give whole minutes.')
		.min(0, 'It cannot be negative.')
		.max(10_080, 'At most a week.'),
	lastDone: z.iso.date({ error: 'Enter a date that exists.' }).optional()
});

export const editTaskSchema = taskSchema.extend({ taskId });

export const taskDoneSchema = z.strictObject({
	taskId,
	note: z.string().trim().max(500, 'Use at most 500 characters.').optional()
});

export const planOutageSchema = z.strictObject({
	taskId,
	start: isoDateTime('start'),
	minutes: z.coerce
		.number({ error: 'Give the length in whole minutes, 15 to 10,080.' })
		.int('Give the length in whole minutes, 15 to 10,080.')
		.min(15, 'Give the length in whole minutes, 15 to 10,080.')
		.max(10_080, 'Give the length in whole minutes, 15 to 10,080.')
});

export const retireTaskSchema = z.strictObject({ taskId });
