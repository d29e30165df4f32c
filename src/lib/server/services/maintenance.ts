// Recurring upkeep per box: what is due, who did it when, and the planned outages it needs.
import { and, asc, eq, isNull, lte, ne, or } from 'drizzle-orm';
import { hasRole } from '$lib/domain/roles';
import { formatDateTime } from '$lib/domain/time';
import {
	DUE_SOON_DAYS,
	dueState,
	maintenanceKindLabel,
	nextDueAt,
	outageKindFor,
	type MaintenanceKind
} from '$lib/domain/upkeep';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { lockBox } from '../db/locks';
import { boxes, maintenanceLog, maintenanceTasks, outages } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { notifyManagers } from './notifications';
import { closeOutage, openOutage } from './outages';
import { transaction } from '../db/transaction';

export type TaskInput = {
	kind: MaintenanceKind;
	title: string;
	intervalDays: number;
	outageMinutes: number;
	/** When it was last done; the first due date follows from it. Omitted: due now. */
	lastDoneAt?: Date | null;
};

function mustManage(actor: Actor) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can change maintenance.');
}

export async function createTask(actor: Actor, boxId: number, input: TaskInput, now = new Date()) {
	mustManage(actor);
	return transaction(async (tx) => {
		const [box] = await tx.select({ id: boxes.id }).from(boxes).where(eq(boxes.id, boxId));
		if (!box) throw notFound('The box');
		const last = input.lastDoneAt ?? null;
		if (last && last > now)
			throw new ServiceError(400, 'The last time it was done cannot be in the future.', {
				fields: { lastDoneAt: 'That date is in the future.' }
			});
		const [{ id }] = await tx
			.insert(maintenanceTasks)
			.values({
				boxId,
				kind: input.kind,
				title: input.title,
				intervalDays: input.intervalDays,
				outageMinutes: input.outageMinutes,
				lastDoneAt: last,
				nextDueAt: last ? nextDueAt(last, input.intervalDays, config.facilityTz) : now
			})
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'maintenance.task_created',
			entity: 'maintenance_task',
			entityId: id,
			details: { boxId, kind: input.kind, intervalDays: input.intervalDays }
		});
		return id;
	});
}

/** The task's row under its lock; every caller updates it, so on a cluster it certifies. */
async function lockTask(tx: Transaction, taskId: number) {
	const [task] = await tx
		.select()
		.from(maintenanceTasks)
		.where(eq(maintenanceTasks.id, taskId))
		.for('update');
	if (!task) throw notFound('The maintenance task');
	return task;
}

/**
 * The box a task is for, read before its transaction: the box lock must be the
 * transaction's first statement (db/locks.ts), and a task never moves to another box.
 */
async function boxOfTask(taskId: number) {
	const [row] = await db
		.select({ boxId: maintenanceTasks.boxId })
		.from(maintenanceTasks)
		.where(eq(maintenanceTasks.id, taskId));
	if (!row) throw notFound('The maintenance task');
	return row.boxId;
}

/** The box's row first, then the task's: the lock order of every write that touches a box. */
async function lockBoxAndTask(tx: Transaction, boxId: number, taskId: number) {
	const box = await lockBox(tx, boxId);
	return { box, task: await lockTask(tx, taskId) };
}

/** Changes a task's interval or title; the due date follows from the last time it was done. */
export async function updateTask(
	actor: Actor,
	taskId: number,
	input: Omit<TaskInput, 'lastDoneAt'>,
	now = new Date()
) {
	mustManage(actor);
	await transaction(async (tx) => {
		const task = await lockTask(tx, taskId);
		await tx
			.update(maintenanceTasks)
			.set({
				kind: input.kind,
				title: input.title,
				intervalDays: input.intervalDays,
				outageMinutes: input.outageMinutes,
				nextDueAt: task.lastDoneAt
					? nextDueAt(task.lastDoneAt, input.intervalDays, config.facilityTz)
					: task.nextDueAt
			})
			.where(eq(maintenanceTasks.id, taskId));
		await audit(tx, {
			actorId: actor.id,
			action: 'maintenance.task_updated',
			entity: 'maintenance_task',
			entityId: taskId,
			details: { ...input, at: now.toISOString() }
		});
	});
}

export async function retireTask(actor: Actor, taskId: number) {
	mustManage(actor);
	await transaction(async (tx) => {
		await lockTask(tx, taskId);
		await tx.update(maintenanceTasks).set({ active: false }).where(eq(maintenanceTasks.id, taskId));
		await audit(tx, {
			actorId: actor.id,
			action: 'maintenance.task_retired',
			entity: 'maintenance_task',
			entityId: taskId
		});
	});
}

/**
 * Logs the task as done (by the actor, now): the next due date moves on by the interval.
 * A planned outage for it that is under way ends now; one still ahead is left standing.
 */
export async function completeTask(
	actor: Actor,
	taskId: number,
	note: string | null,
	now = new Date()
) {
	mustManage(actor);
	const boxId = await boxOfTask(taskId);
	return transaction(async (tx) => {
		const { task } = await lockBoxAndTask(tx, boxId, taskId);
		if (!task.active) throw new ServiceError(409, 'This task is retired.');
		let endedOutage = false;
		let plannedAhead: Date | null = null;
		if (task.plannedOutageId) {
			const [outage] = await tx.select().from(outages).where(eq(outages.id, task.plannedOutageId));
			if (outage && outage.startAt <= now && outage.endAt > now) {
				await closeOutage(tx, actor, outage.id, now);
				endedOutage = true;
			} else if (outage && outage.startAt > now) plannedAhead = outage.startAt;
		}
		await tx.insert(maintenanceLog).values({
			taskId,
			doneAt: now,
			doneBy: actor.id,
			note: note?.trim() || null,
			outageId: task.plannedOutageId
		});
		const next = nextDueAt(now, task.intervalDays, config.facilityTz);
		await tx
			.update(maintenanceTasks)
			.set({ lastDoneAt: now, nextDueAt: next, plannedOutageId: null })
			.where(eq(maintenanceTasks.id, taskId));
		await audit(tx, {
			actorId: actor.id,
			action: 'maintenance.done',
			entity: 'maintenance_task',
			entityId: taskId,
			details: { nextDueAt: next.toISOString(), endedOutage }
		});
		return { nextDueAt: next, endedOutage, plannedAhead };
	});
}

/**
 * Books the task's own planned outage: the box is out of service from `start` for the
 * task's outage length (or `minutes`), cancelling overlapping bookings like any outage.
 */
export async function planOutage(
	actor: Actor,
	taskId: number,
	start: Date,
	minutes?: number,
	now = new Date()
) {
	mustManage(actor);
	const boxId = await boxOfTask(taskId);
	return transaction(async (tx) => {
		const { box, task } = await lockBoxAndTask(tx, boxId, taskId);
		const length = minutes ?? task.outageMinutes;
		if (!(length > 0))
			throw new ServiceError(400, 'Give the outage a length in minutes.', {
				fields: { minutes: 'Give the outage a length in minutes.' }
			});
		if (start.getTime() < now.getTime() - 60_000)
			throw new ServiceError(400, 'A planned outage cannot start in the past.', {
				fields: { start: 'That start is in the past.' }
			});
		if (task.plannedOutageId) {
			const [existing] = await tx
				.select({ endAt: outages.endAt })
				.from(outages)
				.where(eq(outages.id, task.plannedOutageId));
			if (existing && existing.endAt > now)
				throw new ServiceError(409, 'This task already has a planned outage.');
		}
		const end = new Date(start.getTime() + length * 60_000);
		const { outageId, cancelledBookingIds } = await openOutage(
			tx,
			actor,
			box,
			{
				start,
				end,
				kind: outageKindFor[task.kind],
				reason: `Planned maintenance: ${task.title}`
			},
			now
		);
		await tx
			.update(maintenanceTasks)
			.set({ plannedOutageId: outageId })
			.where(eq(maintenanceTasks.id, taskId));
		return { outageId, cancelledBookingIds, end };
	});
}

const taskColumns = {
	id: maintenanceTasks.id,
	boxId: maintenanceTasks.boxId,
	boxName: boxes.name,
	kind: maintenanceTasks.kind,
	title: maintenanceTasks.title,
	intervalDays: maintenanceTasks.intervalDays,
	outageMinutes: maintenanceTasks.outageMinutes,
	lastDoneAt: maintenanceTasks.lastDoneAt,
	nextDueAt: maintenanceTasks.nextDueAt,
	plannedOutageId: maintenanceTasks.plannedOutageId,
	plannedStartAt: outages.startAt,
	plannedEndAt: outages.endAt
};

function withState<T extends { nextDueAt: Date }>(rows: T[], now: Date) {
	return rows.map((r) => ({ ...r, state: dueState(r.nextDueAt, now) }));
}

/** Every active task of a box with its due state, soonest first. */
export async function tasksOf(boxId: number, now = new Date()) {
	const rows = await db
		.select(taskColumns)
		.from(maintenanceTasks)
		.innerJoin(boxes, eq(boxes.id, maintenanceTasks.boxId))
		.leftJoin(outages, eq(outages.id, maintenanceTasks.plannedOutageId))
		.where(and(eq(maintenanceTasks.boxId, boxId), eq(maintenanceTasks.active, true)))
		.orderBy(asc(maintenanceTasks.nextDueAt));
	return withState(rows, now);
}

/** Tasks of every box that are overdue, due, or due within the week: the manager's list. */
export async function dueTasks(now = new Date()) {
	const horizon = new Date(now.getTime() + DUE_SOON_DAYS * 86_400_000);
	const rows = await db
		.select(taskColumns)
		.from(maintenanceTasks)
		.innerJoin(boxes, eq(boxes.id, maintenanceTasks.boxId))
		.leftJoin(outages, eq(outages.id, maintenanceTasks.plannedOutageId))
		.where(and(eq(maintenanceTasks.active, true), lte(maintenanceTasks.nextDueAt, horizon)))
		.orderBy(asc(maintenanceTasks.nextDueAt));
	return withState(rows, now);
}

/**
 * Tells the managers of each task that has fallen due since they were last told, once per
 * due date. Safe to run from every process at once: the outbox's dedupe key keeps one
 * message per task and date, and the row lock keeps one writer of `notifiedDueAt`.
 */
export async function notifyDueTasks(now = new Date()): Promise<number> {
	const due = await db
		.select({ id: maintenanceTasks.id })
		.from(maintenanceTasks)
		.where(
			and(
				eq(maintenanceTasks.active, true),
				lte(maintenanceTasks.nextDueAt, now),
				or(
					isNull(maintenanceTasks.notifiedDueAt),
					ne(maintenanceTasks.notifiedDueAt, maintenanceTasks.nextDueAt)
				)
			)
		)
		.limit(100);
	let told = 0;
	for (const { id } of due) {
		await transaction(async (tx) => {
			const [task] = await tx
				.select({
					id: maintenanceTasks.id,
					title: maintenanceTasks.title,
					kind: maintenanceTasks.kind,
					nextDueAt: maintenanceTasks.nextDueAt,
					notifiedDueAt: maintenanceTasks.notifiedDueAt,
					boxId: maintenanceTasks.boxId,
					boxName: boxes.name
				})
				.from(maintenanceTasks)
				.innerJoin(boxes, eq(boxes.id, maintenanceTasks.boxId))
				.where(eq(maintenanceTasks.id, id))
				.for('update', { skipLocked: true });
			if (!task || task.notifiedDueAt?.getTime() === task.nextDueAt.getTime()) return;
			await notifyManagers(
				`${task.boxName}: ${task.title} is due`,
				`${maintenanceKindLabel[task.kind]} on ${task.boxName} fell due ${formatDateTime(task.nextDueAt, config.facilityTz)}.`,
				`/boxes/${task.boxId}/maintenance`,
				`maintenance-due:${task.id}:${task.nextDueAt.toISOString()}`,
				tx
			);
			await tx
				.update(maintenanceTasks)
				.set({ notifiedDueAt: task.nextDueAt })
				.where(eq(maintenanceTasks.id, task.id));
			told++;
		});
	}
	return told;
}
