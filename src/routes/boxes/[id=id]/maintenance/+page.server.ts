import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { hasRole } from '$lib/domain/roles';
import { fromLocal } from '$lib/domain/time';
import { maintenanceKinds } from '$lib/domain/upkeep';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import {
	completeTask,
	createTask,
	maintenanceHistory,
	planOutage,
	retireTask,
	tasksOf,
	updateTask
} from '$lib/server/services/maintenance';
import { fieldErrors } from '$lib/validation/fields';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	return {
		box: { id, name: found.value.box.name },
		tasks: await tasksOf(id),
		history: await maintenanceHistory(id),
		canManage: hasRole(user.role, 'manager')
	};
};

const taskSchema = z.object({
	kind: z.enum(maintenanceKinds, { error: 'Choose a kind.' }),
	title: z
		.string()
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
	lastDone: z.string().trim().optional()
});

type Values = Record<string, string>;

function parseTask(values: Values) {
	const parsed = taskSchema.safeParse(values);
	if (!parsed.success) return { errors: fieldErrors(parsed.error) };
	const { lastDone, ...task } = parsed.data;
	let lastDoneAt: Date | null = null;
	if (lastDone) {
		// Midday on that date, or now when that is today and midday has not come yet.
		const noon = fromLocal(lastDone, '12:00', config.facilityTz);
		if (!noon) return { errors: { lastDone: 'Enter a date that exists.' } };
		lastDoneAt =
			noon > new Date() && noon.getTime() - Date.now() < 12 * 3_600_000 ? new Date() : noon;
	}
	return { task: { ...task, lastDoneAt } };
}

const refused = (
	form: string,
	values: Values,
	e: { status: number; message: string; details?: unknown }
) =>
	fail(e.status, {
		form,
		values,
		errors: ((e.details as { fields?: Record<string, string> })?.fields ?? {}) as Record<
			string,
			string
		>,
		message: e.message
	});

export const actions: Actions = {
	add: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const { task, errors } = parseTask(values);
		if (!task) return fail(400, { form: 'add', values, errors, message: undefined });
		const result = await attempt(() => createTask(actor, boxId, task));
		if (!result.ok) return refused('add', values, result.error);
		return { form: 'add', added: true };
	},
	edit: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const { task, errors } = parseTask(values);
		if (!task)
			return fail(400, { form: `task-${values.taskId}`, values, errors, message: undefined });
		const result = await attempt(() => updateTask(actor, formId(values.taskId), task));
		if (!result.ok) return refused(`task-${values.taskId}`, values, result.error);
		return { form: `task-${values.taskId}`, saved: true };
	},
	done: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const note = (values.note ?? '').trim();
		if (note.length > 500)
			return fail(400, {
				form: `task-${values.taskId}`,
				values,
				errors: { note: 'Use at most 500 characters.' },
				message: undefined
			});
		const result = await attempt(() => completeTask(actor, formId(values.taskId), note));
		if (!result.ok) return refused(`task-${values.taskId}`, values, result.error);
		return { form: `task-${values.taskId}`, done: result.value };
	},
	plan: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const start = fromLocal(values.startDate ?? '', values.startTime ?? '', config.facilityTz);
		const minutes = Number(values.minutes);
		const errors: Record<string, string> = {};
		if (!start) errors.start = 'Enter a start date and time that exist.';
		if (!Number.isInteger(minutes) || minutes < 15 || minutes > 10_080)
			errors.minutes = 'Give the length in whole minutes, 15 to 10,080.';
		if (Object.keys(errors).length)
			return fail(400, { form: `task-${values.taskId}`, values, errors, message: undefined });
		const result = await attempt(() => planOutage(actor, formId(values.taskId), start!, minutes));
		if (!result.ok) return refused(`task-${values.taskId}`, values, result.error);
		return { form: `task-${values.taskId}`, planned: result.value.cancelledBookingIds.length };
	},
	retire: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Values;
		const result = await attempt(() => retireTask(actor, formId(values.taskId)));
		if (!result.ok) return refused(`task-${values.taskId}`, values, result.error);
		return { form: 'retire', retired: true };
	}
};
