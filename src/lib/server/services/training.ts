import { and, asc, desc, eq, inArray, isNull } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { hasRole } from '$lib/domain/roles';
import {
	certificationState,
	EXPIRY_WARNING_DAYS,
	standing,
	standingByPersonAndModule,
	type CertificationState
} from '$lib/domain/certifications';
import { config } from '../config';
import { db } from '../db';
import {
	boxes,
	boxRequiredModules,
	certifications,
	modulePrerequisites,
	moduleTrainers,
	trainingModules,
	users
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';

export { certificationState, EXPIRY_WARNING_DAYS, type CertificationState };

export async function listModules() {
	const [modules, prereqs, trainers] = await Promise.all([
		db.select().from(trainingModules).orderBy(asc(trainingModules.name)),
		db.select().from(modulePrerequisites),
		db
			.select({ moduleId: moduleTrainers.moduleId, userId: users.id, name: users.name })
			.from(moduleTrainers)
			.innerJoin(users, eq(users.id, moduleTrainers.userId))
	]);
	return modules.map((m) => ({
		id: m.id,
		name: m.name,
		description: m.description,
		validityMonths: m.validityMonths,
		prerequisites: prereqs
			.filter((p) => p.moduleId === m.id)
			.map((p) => ({
				id: p.requiresModuleId,
				name: modules.find((x) => x.id === p.requiresModuleId)?.name ?? ''
			})),
		trainers: trainers
			.filter((t) => t.moduleId === m.id)
			.map((t) => ({ id: t.userId, name: t.name }))
	}));
}

/** Certifications not revoked, newest first: what the booking rules read. */
export async function heldCertifications(userId: number) {
	return db
		.select({
			id: certifications.id,
			moduleId: certifications.moduleId,
			grantedAt: certifications.grantedAt,
			expiresAt: certifications.expiresAt
		})
		.from(certifications)
		.where(and(eq(certifications.userId, userId), isNull(certifications.revokedAt)))
		.orderBy(desc(certifications.expiresAt));
}

/** A user's standing in each module (latest grant), and the boxes each unlocks. */
export async function certificationsOf(userId: number, now = new Date()) {
	const [modules, certs, required, boxRows] = await Promise.all([
		db.select().from(trainingModules).orderBy(asc(trainingModules.name)),
		db
			.select()
			.from(certifications)
			.where(eq(certifications.userId, userId))
			.orderBy(desc(certifications.grantedAt), desc(certifications.id)),
		db.select().from(boxRequiredModules),
		db.select({ id: boxes.id, name: boxes.name }).from(boxes).orderBy(asc(boxes.name))
	]);
	const latest = (moduleId: number) =>
		standing(
			certs.filter((c) => c.moduleId === moduleId),
			now
		);
	const holds = (moduleId: number) => {
		const s = certificationState(latest(moduleId), now);
		return s === 'current' || s === 'expiring';
	};
	return modules.map((m) => {
		const cert = latest(m.id);
		return {
			moduleId: m.id,
			moduleName: m.name,
			validityMonths: m.validityMonths,
			state: certificationState(cert, now),
			certificationId: cert?.id ?? null,
			grantedAt: cert?.grantedAt ?? null,
			expiresAt: cert?.expiresAt ?? null,
			note: cert?.note ?? null,
			// A box opens once every module it requires is held; list those this module is part of.
			unlocks: boxRows
				.filter((b) => required.some((r) => r.boxId === b.id && r.moduleId === m.id))
				.map((b) => ({
					id: b.id,
					name: b.name,
					bookable: required.filter((r) => r.boxId === b.id).every((r) => holds(r.moduleId))
				}))
		};
	});
}

/** The /api/me list: modules the user holds now, with their expiry. */
export async function currentCertifications(userId: number, now = new Date()) {
	return (await certificationsOf(userId, now))
		.filter((c) => c.state === 'current' || c.state === 'expiring')
		.map((c) => ({
			moduleId: c.moduleId,
			module: c.moduleName,
			grantedAt: c.grantedAt,
			expiresAt: c.expiresAt,
			expiringSoon: c.state === 'expiring'
		}));
}

async function mayCertify(actor: Actor, moduleId: number): Promise<boolean> {
	if (hasRole(actor.role, 'manager')) return true;
	if (!hasRole(actor.role, 'trainer')) return false;
	const [row] = await db
		.select()
		.from(moduleTrainers)
		.where(and(eq(moduleTrainers.moduleId, moduleId), eq(moduleTrainers.userId, actor.id)));
	return Boolean(row);
}

export type Grant = { userId: number; moduleId: number; grantedOn: string; note?: string };

/** Grants a module; the expiry follows from its validity, counted in the facility's zone. */
export async function grantCertification(actor: Actor, input: Grant, now = new Date()) {
	const [module] = await db
		.select()
		.from(trainingModules)
		.where(eq(trainingModules.id, input.moduleId));
	if (!module) throw notFound('The training module');
	if (!(await mayCertify(actor, module.id))) {
		throw forbidden(`Only a trainer who teaches “${module.name}” or a manager can certify it.`);
	}
	const [person] = await db
		.select({ id: users.id, name: users.name, status: users.status })
		.from(users)
		.where(eq(users.id, input.userId));
	if (!person || person.status !== 'active') throw notFound('The person');

	const granted = DateTime.fromISO(input.grantedOn, { zone: config.facilityTz }).startOf('day');
	if (!granted.isValid) {
		throw new ServiceError(400, 'Enter the training date.', {
			fields: { grantedOn: 'Enter the training date.' }
		});
	}
	if (granted.toJSDate() > now) {
		const message = 'The training date cannot be in the future.';
		throw new ServiceError(400, message, { fields: { grantedOn: message } });
	}
	const grantedAt = granted.toJSDate();
	const expiresAt = granted.plus({ months: module.validityMonths }).toJSDate();

	const prerequisites = await db
		.select({ id: trainingModules.id, name: trainingModules.name })
		.from(modulePrerequisites)
		.innerJoin(trainingModules, eq(trainingModules.id, modulePrerequisites.requiresModuleId))
		.where(eq(modulePrerequisites.moduleId, module.id));
	if (prerequisites.length) {
		const held = await heldCertifications(person.id);
		const missing = prerequisites.filter(
			(p) => !held.some((c) => c.moduleId === p.id && c.expiresAt > now)
		);
		if (missing.length) {
			throw new ServiceError(
				422,
				`${person.name} first needs ${missing.map((m) => `“${m.name}”`).join(' and ')}.`,
				{
					reasons: missing.map((m) => ({
						code: 'prerequisite_missing',
						moduleId: m.id,
						message: `Needs “${m.name}” first.`
					}))
				}
			);
		}
	}

	return transaction(async (tx) => {
		const [created] = await tx
			.insert(certifications)
			.values({
				userId: person.id,
				moduleId: module.id,
				grantedAt,
				expiresAt,
				grantedBy: actor.id,
				note: input.note || null
			})
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'certification.granted',
			entity: 'certification',
			entityId: created.id,
			details: { userId: person.id, moduleId: module.id, expiresAt: expiresAt.toISOString() }
		});
		return { id: created.id, grantedAt, expiresAt };
	});
}

export async function revokeCertification(actor: Actor, certificationId: number, reason: string) {
	const [cert] = await db
		.select()
		.from(certifications)
		.where(eq(certifications.id, certificationId));
	if (!cert) throw notFound('The certification');
	if (!(await mayCertify(actor, cert.moduleId))) {
		throw forbidden('Only a trainer who teaches this module or a manager can revoke it.');
	}
	if (cert.revokedAt) throw new ServiceError(409, 'This certification is already revoked.');
	await transaction(async (tx) => {
		await tx
			.update(certifications)
			.set({ revokedAt: new Date(), revokedBy: actor.id, revokeReason: reason })
			.where(eq(certifications.id, certificationId));
		await audit(tx, {
			actorId: actor.id,
			action: 'certification.revoked',
			entity: 'certification',
			entityId: certificationId,
			details: { userId: cert.userId, moduleId: cert.moduleId, reason }
		});
	});
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

/** Users × modules, for managers and trainers: each cell the latest state. */
export async function certificationMatrix(now = new Date()) {
	const [people, modules, certs] = await Promise.all([
		db
			.select({ id: users.id, name: users.name, email: users.email })
			.from(users)
			.where(eq(users.status, 'active'))
			.orderBy(asc(users.name)),
		db
			.select({ id: trainingModules.id, name: trainingModules.name })
			.from(trainingModules)
			.orderBy(asc(trainingModules.name)),
		db
			.select()
			.from(certifications)
			.orderBy(desc(certifications.grantedAt), desc(certifications.id))
	]);
	const byKey = standingByPersonAndModule(certs, now);
	return {
		modules,
		rows: people.map((p) => ({
			...p,
			cells: modules.map((m) => {
				const c = byKey.get(`${p.id}:${m.id}`);
				return {
					moduleId: m.id,
					state: certificationState(c, now),
					expiresAt: c?.expiresAt ?? null,
					certificationId: c?.id ?? null
				};
			})
		}))
	};
}

export type ModuleInput = {
	name: string;
	description: string;
	validityMonths: number;
	prerequisiteIds: number[];
	trainerIds: number[];
};

export async function createModule(actor: Actor, input: ModuleInput) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can add training modules.');
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
			if (input.prerequisiteIds.length) {
				await tx
					.insert(modulePrerequisites)
					.values(
						input.prerequisiteIds.map((r) => ({ moduleId: created.id, requiresModuleId: r }))
					);
			}
			if (input.trainerIds.length) {
				const trainers = await tx
					.select({ id: users.id })
					.from(users)
					.where(inArray(users.id, input.trainerIds));
				if (trainers.length)
					await tx
						.insert(moduleTrainers)
						.values(trainers.map((t) => ({ moduleId: created.id, userId: t.id })));
			}
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
		if (isDuplicateKey(e)) {
			const message = 'A module with this name exists.';
			throw new ServiceError(409, message, { fields: { name: message } });
		}
		throw e;
	}
}
