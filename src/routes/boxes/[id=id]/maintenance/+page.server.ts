import { error } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { doneOn } from '$lib/domain/upkeep';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { attempt, ServiceError } from '$lib/server/services/errors';
import {
	completeTask,
	createTask,
	planOutage,
	retireTask,
	tasksOf,
	updateTask
} from '$lib/server/services/maintenance';
import { formId, runConfirmedForm, runForm } from '$lib/server/forms';
import { maintenanceHistory, upkeepLogList } from '$lib/server/services/upkeep-log';
import { readListQuery } from '$lib/domain/listing';
import { formatRange } from '$lib/domain/time';
import {
	editTaskSchema,
	planOutageSchema,
	retireTaskSchema,
	taskDoneSchema,
	taskSchema
} from '$lib/validation/maintenance';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const log = await maintenanceHistory(id, readListQuery(event.url.searchParams, upkeepLogList));
	return {
		box: { id, name: found.value.box.name },
		tasks: await tasksOf(id),
		history: log.rows,
		historyView: log.view,
		canManage: hasRole(user.role, 'manager')
	};
};

/** The per-task form an action answers: `task-<id>`, read before the form is parsed. */
async function taskForm(request: Request) {
	return `task-${formId((await request.clone().formData()).get('taskId'))}`;
}

/** A task's fields with the date it was last done as the instant the service takes. */
function withDoneAt<T extends { lastDone?: string }>({ lastDone, ...task }: T) {
	const lastDoneAt = lastDone ? doneOn(lastDone, config.facilityTz) : null;
	if (lastDone && !lastDoneAt)
		throw new ServiceError(400, 'Enter a date that exists.', {
			fields: { lastDone: 'Enter a date that exists.' }
		});
	return { ...task, lastDoneAt };
}

export const actions: Actions = {
	add: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		return runForm(
			event.request,
			taskSchema,
			async (task) => {
				await createTask(actor, boxId, withDoneAt(task));
				return { added: true };
			},
			{ form: 'add' }
		);
	},
	edit: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			editTaskSchema,
			async ({ taskId, ...task }) => {
				await updateTask(actor, taskId, withDoneAt(task));
				return { saved: true };
			},
			{ form: await taskForm(event.request) }
		);
	},
	done: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			taskDoneSchema,
			async ({ taskId, note }) => ({ done: await completeTask(actor, taskId, note ?? '') }),
			{ form: await taskForm(event.request) }
		);
	},
	plan: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			planOutageSchema,
			async ({ taskId, start, minutes }) => ({
				planned: (await planOutage(actor, taskId, start, minutes)).cancelledBookingIds.length
			}),
			{ form: await taskForm(event.request), instants: { start: ['startDate', 'startTime'] } }
		);
	},
	retire: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		return runConfirmedForm(
			event.request,
			retireTaskSchema,
			async ({ taskId }) => {
				const task = (await tasksOf(boxId)).find((t) => t.id === taskId);
				const planned =
					task?.plannedStartAt && task.plannedEndAt && task.plannedEndAt > new Date()
						? ` Its planned outage ${formatRange(task.plannedStartAt, task.plannedEndAt, config.facilityTz)} still stands; withdraw it on the box page if it is no longer needed.`
						: '';
				return {
					title: task ? `Retire “${task.title}”?` : 'Retire this task?',
					message: `It leaves the schedule: it is no longer due and nobody is reminded. What was logged stays.${planned}`,
					yes: 'Yes, retire it'
				};
			},
			async ({ taskId }) => {
				await retireTask(actor, taskId);
				return { retired: true };
			},
			{ form: 'retire' }
		);
	}
};
