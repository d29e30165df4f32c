import { and, asc, desc, eq, gt, inArray, isNull } from 'drizzle-orm';
import { DateTime } from 'luxon';
import type { ListSpec } from '$lib/domain/listing';
import { bookingPath } from '$lib/domain/training-requests';
import type { GrantInput } from '$lib/validation/training';
import {
	certificationState,
	EXPIRY_WARNING_DAYS,
	standing,
	standingByPersonAndModule,
	type CertificationState
} from '$lib/domain/certifications';
import { config } from '../config';
import { db, type Transaction } from '../db';
import {
	boxes,
	boxRequiredModules,
	certifications,
	modulePrerequisites,
	moduleTrainers,
	trainingModules,
	users
} from '../db/schema';
import { enqueue } from '../mail/outbox';
import { certificationGranted } from '../mail/training-messages';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { mayCertify } from './training-modules';
import { closeOpenRequest } from './training-requests';
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
			// Only those who can teach now: active, and still trainers (or above).
			.where(and(eq(users.status, 'active'), inArray(users.role, ['trainer', 'manager', 'admin'])))
			.orderBy(asc(users.name))
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

const refuse = (field: string, message: string) =>
	new ServiceError(400, message, { fields: { [field]: message } });

/** When the training was and until when it holds: from the form's date, the API's expiry. */
function grantTimes(
	input: Pick<GrantInput, 'grantedOn' | 'expiresAt'>,
	validityMonths: number,
	now: Date
) {
	let granted = DateTime.fromJSDate(now, { zone: config.facilityTz });
	if (input.grantedOn) {
		granted = DateTime.fromISO(input.grantedOn, { zone: config.facilityTz }).startOf('day');
		if (!granted.isValid) throw refuse('grantedOn', 'Enter the training date.');
		if (granted.toJSDate() > now)
			throw refuse('grantedOn', 'The training date cannot be in the future.');
	}
	const longest = granted.plus({ months: validityMonths }).toJSDate();
	if (input.expiresAt && input.expiresAt <= now)
		throw refuse('expiresAt', 'The expiry must be in the future.');
	if (input.expiresAt && input.expiresAt > longest)
		throw refuse(
			'expiresAt',
			`The module is valid for ${validityMonths} months; the expiry cannot be later than that.`
		);
	return { grantedAt: granted.toJSDate(), expiresAt: input.expiresAt ?? longest };
}

/**
 * Records a certification. Nobody certifies themself; a trainer only the modules they teach.
 * The person's open request for the module is closed and they are told what they can book
 * now, in the same transaction.
 */
export async function grantCertification(actor: Actor, input: GrantInput, now = new Date()) {
	const [module] = await db
		.select()
		.from(trainingModules)
		.where(eq(trainingModules.id, input.moduleId));
	if (!module) throw notFound('The training module');
	// Nobody, manager or trainer, records their own training: it would undo a revocation.
	if (input.userId === actor.id)
		throw forbidden('Another trainer or a manager must record your training.');
	if (!(await mayCertify(actor, module.id))) {
		throw forbidden(`Only a trainer who teaches “${module.name}” or a manager can certify it.`);
	}
	const [person] = await db
		.select({ id: users.id, name: users.name, email: users.email, status: users.status })
		.from(users)
		.where(eq(users.id, input.userId));
	if (!person || person.status !== 'active') throw notFound('The person');
	const { grantedAt, expiresAt } = grantTimes(input, module.validityMonths, now);

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
		const requestId = await closeOpenRequest(tx, person.id, module.id, actor.id, now);
		const told = certificationGranted({
			to: person.name,
			module: module.name,
			expiresAt,
			bookable: await bookableWith(tx, person.id, module.id, now)
		});
		await enqueue(tx, person, told.message, `certification:${created.id}:granted`, told.inApp);
		return {
			id: created.id,
			userId: person.id,
			moduleId: module.id,
			moduleName: module.name,
			grantedAt,
			expiresAt,
			requestId
		};
	});
}

/** The boxes needing `moduleId` that the person can book once it is held (read in `tx`). */
async function bookableWith(tx: Transaction, userId: number, moduleId: number, now: Date) {
	const needing = await tx
		.select({ boxId: boxRequiredModules.boxId })
		.from(boxRequiredModules)
		.where(eq(boxRequiredModules.moduleId, moduleId));
	if (!needing.length) return [];
	const boxIds = needing.map((n) => n.boxId);
	const [rows, required, live] = await Promise.all([
		tx
			.select({ id: boxes.id, name: boxes.name })
			.from(boxes)
			.where(inArray(boxes.id, boxIds))
			.orderBy(asc(boxes.name)),
		tx
			.select({ boxId: boxRequiredModules.boxId, id: boxRequiredModules.moduleId })
			.from(boxRequiredModules)
			.where(inArray(boxRequiredModules.boxId, boxIds)),
		tx
			.select({ moduleId: certifications.moduleId })
			.from(certifications)
			.where(
				and(
					eq(certifications.userId, userId),
					isNull(certifications.revokedAt),
					gt(certifications.expiresAt, now)
				)
			)
	]);
	const held = new Set([moduleId, ...live.map((c) => c.moduleId)]);
	const path = bookingPath(
		rows.map((b) => ({
			...b,
			requiredModules: required.filter((r) => r.boxId === b.id).map((r) => ({ id: r.id, name: '' }))
		})),
		held
	);
	return path.boxes.filter((b) => !b.missing.length).map((b) => b.name);
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

/** Users × modules, for managers and trainers: each cell the latest state. */
/**
 * The matrix's people, searched and paged in memory (it is built whole: every active person
 * against every module), with a filter for who has a module expiring or lapsed.
 */
export const matrixList = {
	sorts: ['name', 'email'],
	defaultSort: 'name',
	defaultDir: 'asc',
	filters: { holds: ['expiring', 'expired'] },
	perPage: 25
} as const satisfies ListSpec;

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
