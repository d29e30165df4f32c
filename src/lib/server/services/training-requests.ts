// Asking for training and the answer: a person asks for a module, its trainers are told
// (the managers when nobody teaches it), a trainer grants it (training.ts closes the request)
// or declines it with a reason, and the person is told either way.
import { and, asc, eq, inArray, ne, type SQL } from 'drizzle-orm';
import { certificationState, standing } from '$lib/domain/certifications';
import { hasRole } from '$lib/domain/roles';
import { formatDate } from '$lib/domain/time';
import { requestRefusal } from '$lib/domain/training-requests';
import type { TrainingRequestInput } from '$lib/validation/training';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { lockUser } from '../db/locks';
import {
	certifications,
	moduleTrainers,
	trainingModules,
	trainingRequests,
	users
} from '../db/schema';
import { enqueue, enqueueMany } from '../mail/outbox';
import { trainingDeclined, trainingRequested } from '../mail/training-messages';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { mayCertify } from './training-modules';
import { transaction } from '../db/transaction';

const teachingRoles = ['trainer', 'manager', 'admin'] as const;

/**
 * Who hears of a request: the module's active trainers, or every active manager when it has
 * none, so a request never goes unread. The person asking is never among them.
 */
async function recipients(tx: Transaction, moduleId: number, except: number) {
	const person = { id: users.id, email: users.email, name: users.name };
	const active = and(eq(users.status, 'active'), ne(users.id, except));
	const trainers = await tx
		.select(person)
		.from(moduleTrainers)
		.innerJoin(users, eq(users.id, moduleTrainers.userId))
		.where(
			and(eq(moduleTrainers.moduleId, moduleId), active, inArray(users.role, [...teachingRoles]))
		);
	if (trainers.length) return { people: trainers, noTrainer: false };
	const managers = await tx
		.select(person)
		.from(users)
		.where(and(active, inArray(users.role, ['manager', 'admin'])));
	return { people: managers, noTrainer: true };
}

/**
 * Asks for training in a module. Refused (409) while a request of the person's for it is
 * open, and while they hold it outside the expiry warning window; inside it, asking is how
 * a renewal starts. The person's row is locked, so two clicks make one request.
 */
export async function requestTraining(actor: Actor, input: TrainingRequestInput, now = new Date()) {
	const [module] = await db
		.select({ id: trainingModules.id, name: trainingModules.name })
		.from(trainingModules)
		.where(eq(trainingModules.id, input.moduleId));
	if (!module) throw notFound('The training module');
	return transaction(async (tx) => {
		// The person's lock first, as a certified write: on a cluster, two nodes' requests
		// for one module meet there, and the second sees the first's request.
		if (!(await lockUser(tx, actor.id))) throw notFound('The person');
		const [person] = await tx
			.select({ id: users.id, name: users.name })
			.from(users)
			.where(eq(users.id, actor.id))
			.for('update');
		if (!person) throw notFound('The person');
		const [open, certs] = await Promise.all([
			tx
				.select({ id: trainingRequests.id, createdAt: trainingRequests.createdAt })
				.from(trainingRequests)
				.where(
					and(
						eq(trainingRequests.userId, person.id),
						eq(trainingRequests.moduleId, module.id),
						eq(trainingRequests.status, 'open')
					)
				),
			tx
				.select()
				.from(certifications)
				.where(and(eq(certifications.userId, person.id), eq(certifications.moduleId, module.id)))
		]);
		const held = standing(certs, now);
		const refusal = requestRefusal(certificationState(held, now), open.length > 0);
		if (refusal === 'open')
			throw new ServiceError(
				409,
				`You already asked for training in “${module.name}” on ${formatDate(open[0].createdAt, config.facilityTz)}; its trainers have been told.`,
				{ code: 'request_open', requestId: open[0].id }
			);
		if (refusal === 'held')
			throw new ServiceError(
				409,
				`You already hold “${module.name}” until ${formatDate(held!.expiresAt, config.facilityTz)}.`,
				{ code: 'certification_held' }
			);

		const note = input.note || null;
		const [created] = await tx
			.insert(trainingRequests)
			.values({ userId: person.id, moduleId: module.id, note, createdAt: now })
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'training_request.opened',
			entity: 'training_request',
			entityId: created.id,
			details: { moduleId: module.id }
		});
		const { people, noTrainer } = await recipients(tx, module.id, person.id);
		await enqueueMany(
			tx,
			people.map((to) => {
				const told = trainingRequested({
					to: to.name,
					person: person.name,
					module: module.name,
					note,
					noTrainer
				});
				return {
					to,
					message: told.message,
					dedupeKey: `training-request:${created.id}:to:${to.id}`,
					inApp: told.inApp
				};
			})
		);
		return {
			id: created.id,
			userId: person.id,
			moduleId: module.id,
			moduleName: module.name,
			note,
			status: 'open' as const,
			createdAt: now
		};
	});
}

/**
 * Open requests the actor may decide: for the modules they teach, every one for managers;
 * never their own. Oldest first, as they should be answered.
 */
export async function openRequestsFor(actor: Actor) {
	if (!hasRole(actor.role, 'trainer')) throw forbidden('Only trainers and managers see requests.');
	const scope: SQL[] = [
		eq(trainingRequests.status, 'open'),
		eq(users.status, 'active'),
		ne(trainingRequests.userId, actor.id)
	];
	if (!hasRole(actor.role, 'manager'))
		scope.push(
			inArray(
				trainingRequests.moduleId,
				db
					.select({ id: moduleTrainers.moduleId })
					.from(moduleTrainers)
					.where(eq(moduleTrainers.userId, actor.id))
			)
		);
	return db
		.select({
			id: trainingRequests.id,
			userId: trainingRequests.userId,
			userName: users.name,
			moduleId: trainingRequests.moduleId,
			moduleName: trainingModules.name,
			note: trainingRequests.note,
			createdAt: trainingRequests.createdAt
		})
		.from(trainingRequests)
		.innerJoin(users, eq(users.id, trainingRequests.userId))
		.innerJoin(trainingModules, eq(trainingModules.id, trainingRequests.moduleId))
		.where(and(...scope))
		.orderBy(asc(trainingRequests.createdAt), asc(trainingRequests.id));
}

/** The person's own open requests, by module. */
export async function openRequestsOf(userId: number) {
	return db
		.select({
			id: trainingRequests.id,
			moduleId: trainingRequests.moduleId,
			note: trainingRequests.note,
			createdAt: trainingRequests.createdAt
		})
		.from(trainingRequests)
		.where(and(eq(trainingRequests.userId, userId), eq(trainingRequests.status, 'open')));
}

/**
 * The request under its row lock, still open; 404 or 409 otherwise. Every caller then
 * updates the row, so on a cluster the lock certifies as it is.
 */
async function lockOpen(tx: Transaction, requestId: number, ownerOnly?: number) {
	const [request] = await tx
		.select({
			id: trainingRequests.id,
			userId: trainingRequests.userId,
			moduleId: trainingRequests.moduleId,
			status: trainingRequests.status,
			moduleName: trainingModules.name
		})
		.from(trainingRequests)
		.innerJoin(trainingModules, eq(trainingModules.id, trainingRequests.moduleId))
		.where(eq(trainingRequests.id, requestId))
		.for('update');
	// Someone else's request is not found, rather than forbidden: it is none of their business.
	if (!request || (ownerOnly !== undefined && request.userId !== ownerOnly))
		throw notFound('The training request');
	if (request.status !== 'open')
		throw new ServiceError(409, `This request was already ${request.status}.`);
	return request;
}

/** A trainer of the module (or a manager) says no, with a reason the person is told. */
export async function declineRequest(
	actor: Actor,
	input: { requestId: number; reason: string },
	now = new Date()
) {
	await transaction(async (tx) => {
		const request = await lockOpen(tx, input.requestId);
		if (request.userId === actor.id)
			throw forbidden('Your own request is for another trainer or a manager to decide.');
		if (!(await mayCertify(actor, request.moduleId)))
			throw forbidden(
				`Only a trainer who teaches “${request.moduleName}” or a manager can decide this request.`
			);
		await tx
			.update(trainingRequests)
			.set({ status: 'declined', decidedAt: now, decidedBy: actor.id, decisionNote: input.reason })
			.where(eq(trainingRequests.id, request.id));
		await audit(tx, {
			actorId: actor.id,
			action: 'training_request.declined',
			entity: 'training_request',
			entityId: request.id,
			details: { userId: request.userId, moduleId: request.moduleId, reason: input.reason }
		});
		const [[person], [by]] = await Promise.all([
			tx
				.select({ id: users.id, email: users.email, name: users.name })
				.from(users)
				.where(eq(users.id, request.userId)),
			tx.select({ name: users.name }).from(users).where(eq(users.id, actor.id))
		]);
		if (!person) return;
		const told = trainingDeclined({
			to: person.name,
			module: request.moduleName,
			by: by?.name ?? 'A trainer',
			reason: input.reason
		});
		await enqueue(tx, person, told.message, `training-request:${request.id}:declined`, told.inApp);
	});
}

/** The person takes back their own open request. */
export async function withdrawRequest(actor: Actor, requestId: number, now = new Date()) {
	await transaction(async (tx) => {
		const request = await lockOpen(tx, requestId, actor.id);
		await tx
			.update(trainingRequests)
			.set({ status: 'withdrawn', decidedAt: now, decidedBy: actor.id })
			.where(eq(trainingRequests.id, request.id));
		await audit(tx, {
			actorId: actor.id,
			action: 'training_request.withdrawn',
			entity: 'training_request',
			entityId: request.id,
			details: { moduleId: request.moduleId }
		});
	});
}

/**
 * Closes the person's open request for the module as granted, inside the grant's
 * transaction; its id, or null when there was none.
 */
export async function closeOpenRequest(
	tx: Transaction,
	userId: number,
	moduleId: number,
	actorId: number,
	now: Date
): Promise<number | null> {
	const open = and(
		eq(trainingRequests.userId, userId),
		eq(trainingRequests.moduleId, moduleId),
		eq(trainingRequests.status, 'open')
	);
	// The rows are updated below: the lock certifies as it is.
	const rows = await tx
		.select({ id: trainingRequests.id })
		.from(trainingRequests)
		.where(open)
		.for('update');
	if (!rows.length) return null;
	await tx
		.update(trainingRequests)
		.set({ status: 'granted', decidedAt: now, decidedBy: actorId })
		.where(open);
	for (const r of rows) {
		await audit(tx, {
			actorId,
			action: 'training_request.granted',
			entity: 'training_request',
			entityId: r.id,
			details: { userId, moduleId }
		});
	}
	return rows[0].id;
}
