// Training modules and who teaches them: adding and editing modules (managers), the
// trainers' appointments, and the modules nobody teaches, which managers are shown.
import { and, asc, eq, inArray, notExists } from 'drizzle-orm';
import { hasRole } from '$lib/domain/roles';
import { closesCircle } from '$lib/domain/training-requests';
import type { ModuleInput } from '$lib/validation/training';
import { db, type Transaction } from '../db';
import { modulePrerequisites, moduleTrainers, trainingModules, users } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';

export type { ModuleInput };

const teachingRoles = ['trainer', 'manager', 'admin'] as const;

/** Whether the actor may certify (and decide requests for) a module: its trainers, managers. */
export async function mayCertify(actor: Actor, moduleId: number): Promise<boolean> {
	if (hasRole(actor.role, 'manager')) return true;
	if (!hasRole(actor.role, 'trainer')) return false;
	const [row] = await db
		.select()
		.from(moduleTrainers)
		.where(and(eq(moduleTrainers.moduleId, moduleId), eq(moduleTrainers.userId, actor.id)));
	return Boolean(row);
}

/** The modules a person is appointed to teach (none for someone below the trainer role). */
export async function teachingOf(actor: Actor) {
	if (!hasRole(actor.role, 'trainer')) return [];
	return db
		.select({ id: trainingModules.id, name: trainingModules.name })
		.from(moduleTrainers)
		.innerJoin(trainingModules, eq(trainingModules.id, moduleTrainers.moduleId))
		.where(eq(moduleTrainers.userId, actor.id))
		.orderBy(asc(trainingModules.name));
}

/** Modules the actor may certify (all for managers, their own for trainers). */
export async function modulesTaughtBy(actor: Actor) {
	if (hasRole(actor.role, 'manager')) {
		return db
			.select({ id: trainingModules.id, name: trainingModules.name })
			.from(trainingModules)
			.orderBy(asc(trainingModules.name));
	}
	return db
		.select({ id: trainingModules.id, name: trainingModules.name })
		.from(moduleTrainers)
		.innerJoin(trainingModules, eq(trainingModules.id, moduleTrainers.moduleId))
		.where(eq(moduleTrainers.userId, actor.id))
		.orderBy(asc(trainingModules.name));
}

/** Active people who may be appointed to teach a module: trainers and above. */
export async function trainerCandidates() {
	return db
		.select({ id: users.id, name: users.name })
		.from(users)
		.where(and(eq(users.status, 'active'), inArray(users.role, [...teachingRoles])))
		.orderBy(asc(users.name));
}

/** Modules without an active trainer: requests for them go to the managers instead. */
export async function modulesWithoutTrainers() {
	return db
		.select({ id: trainingModules.id, name: trainingModules.name })
		.from(trainingModules)
		.where(
			notExists(
				db
					.select({ one: moduleTrainers.userId })
					.from(moduleTrainers)
					.innerJoin(users, eq(users.id, moduleTrainers.userId))
					.where(
						and(
							eq(moduleTrainers.moduleId, trainingModules.id),
							eq(users.status, 'active'),
							inArray(users.role, [...teachingRoles])
						)
					)
			)
		)
		.orderBy(asc(trainingModules.name));
}

const fieldRefusal = (status: number, field: string, message: string) =>
	new ServiceError(status, message, { fields: { [field]: message } });

/** Refuses trainers who are not active trainers (or above), naming them. */
async function checkTrainers(ids: number[]) {
	if (!ids.length) return;
	const people = await db
		.select({ id: users.id, name: users.name, role: users.role, status: users.status })
		.from(users)
		.where(inArray(users.id, ids));
	const unfit = ids.filter((id) => {
		const p = people.find((x) => x.id === id);
		return !p || p.status !== 'active' || !hasRole(p.role, 'trainer');
	});
	if (unfit.length) {
		const names = people.filter((p) => unfit.includes(p.id)).map((p) => p.name);
		throw fieldRefusal(
			400,
			'trainerIds',
			`${names.length ? names.join(', ') : 'Someone chosen'} cannot teach: only active trainers and managers can. An admin gives the role first.`
		);
	}
}

async function setLinks(tx: Transaction, moduleId: number, input: ModuleInput) {
	await tx.delete(modulePrerequisites).where(eq(modulePrerequisites.moduleId, moduleId));
	await tx.delete(moduleTrainers).where(eq(moduleTrainers.moduleId, moduleId));
	const prerequisiteIds = [...new Set(input.prerequisiteIds)];
	const trainerIds = [...new Set(input.trainerIds)];
	if (prerequisiteIds.length)
		await tx
			.insert(modulePrerequisites)
			.values(prerequisiteIds.map((r) => ({ moduleId, requiresModuleId: r })));
	if (trainerIds.length)
		await tx.insert(moduleTrainers).values(trainerIds.map((userId) => ({ moduleId, userId })));
}

function duplicateName(e: unknown): never {
	if (isDuplicateKey(e)) throw fieldRefusal(409, 'name', 'A module with this name exists.');
	throw e;
}

async function checkPrerequisites(moduleId: number, ids: number[]) {
	if (!ids.length) return;
	const [known, edges] = await Promise.all([
		db
			.select({ id: trainingModules.id })
			.from(trainingModules)
			.where(inArray(trainingModules.id, ids)),
		db.select().from(modulePrerequisites)
	]);
	if (known.length !== new Set(ids).size)
		throw fieldRefusal(400, 'prerequisiteIds', 'Choose from the listed modules.');
	if (closesCircle(moduleId, ids, edges))
		throw fieldRefusal(
			400,
			'prerequisiteIds',
			'A module cannot need itself first, nor a module that already needs it.'
		);
}

export async function createModule(actor: Actor, input: ModuleInput) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can add training modules.');
	await checkTrainers(input.trainerIds);
	await checkPrerequisites(0, input.prerequisiteIds);
	try {
		return await transaction(async (tx) => {
			const [created] = await tx
				.insert(trainingModules)
				.values({
					name: input.name,
					description: input.description,
					validityMonths: input.validityMonths
				})
				.$returningId();
			await setLinks(tx, created.id, input);
			await audit(tx, {
				actorId: actor.id,
				action: 'module.created',
				entity: 'training_module',
				entityId: created.id,
				details: { name: input.name }
			});
			return created.id;
		});
	} catch (e) {
		duplicateName(e);
	}
}

/**
 * Edits a module: name, description, validity, prerequisites and trainers. Certifications
 * already granted keep their expiry; a new validity applies to the next grant.
 */
export async function updateModule(actor: Actor, moduleId: number, input: ModuleInput) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can edit training modules.');
	const [module] = await db.select().from(trainingModules).where(eq(trainingModules.id, moduleId));
	if (!module) throw notFound('The training module');
	await checkTrainers(input.trainerIds);
	await checkPrerequisites(moduleId, input.prerequisiteIds);
	try {
		await transaction(async (tx) => {
			// The row is updated below, so on a cluster the lock certifies as it is.
			const [before] = await tx
				.select()
				.from(trainingModules)
				.where(eq(trainingModules.id, moduleId))
				.for('update');
			if (!before) throw notFound('The training module');
			const trainersBefore = await tx
				.select({ userId: moduleTrainers.userId })
				.from(moduleTrainers)
				.where(eq(moduleTrainers.moduleId, moduleId));
			await tx
				.update(trainingModules)
				.set({
					name: input.name,
					description: input.description,
					validityMonths: input.validityMonths
				})
				.where(eq(trainingModules.id, moduleId));
			await setLinks(tx, moduleId, input);
			await audit(tx, {
				actorId: actor.id,
				action: 'module.updated',
				entity: 'training_module',
				entityId: moduleId,
				details: {
					name: [before.name, input.name],
					validityMonths: [before.validityMonths, input.validityMonths],
					trainerIds: [trainersBefore.map((t) => t.userId), input.trainerIds],
					prerequisiteIds: input.prerequisiteIds
				}
			});
		});
	} catch (e) {
		duplicateName(e);
	}
}
