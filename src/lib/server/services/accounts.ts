import { and, asc, count, eq } from 'drizzle-orm';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import { groupMemberships, researchGroups, users, type Role } from '../db/schema';
import { hashPassword, verifyDecoy, verifyPassword } from '../password';
import { checkNewPassword } from '../password-policy';
import {
	takePasswordCheck,
	takeRegistration,
	takeSignIn,
	tooMany,
	waitInWords
} from '../rate-limit';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';

export type Actor = { id: number; role: Role };

export type Registration = { name: string; email: string; password: string; groupId: number };

/**
 * Creates a pending account and its request to join a group, together or not at all.
 * Throttled per address and per e-mail before anything else (the hash is the costly part).
 */
export async function register(input: Registration, address: string): Promise<number> {
	const throttle = await takeRegistration(input.email, address);
	if (!throttle.ok)
		throw tooMany(registrationThrottled(throttle.retryAfterSeconds), throttle.retryAfterSeconds);
	const [group] = await db
		.select({ id: researchGroups.id })
		.from(researchGroups)
		.where(eq(researchGroups.id, input.groupId));
	if (!group)
		throw new ServiceError(400, 'Choose one of the listed groups.', {
			fields: { groupId: 'Choose one of the listed groups.' }
		});

	await checkNewPassword(input.password, input);
	const passwordHash = await hashPassword(input.password);
	try {
		return await transaction(async (tx) => {
			const [created] = await tx
				.insert(users)
				.values({ name: input.name, email: input.email, passwordHash, status: 'pending' })
				.$returningId();
			await tx.insert(groupMemberships).values({ groupId: group.id, userId: created.id });
			await audit(tx, {
				actorId: created.id,
				action: 'user.registered',
				entity: 'user',
				entityId: created.id,
				details: { groupId: group.id }
			});
			return created.id;
		});
	} catch (e) {
		if (isDuplicateKey(e)) {
			const message = 'An account with this e-mail already exists. Sign in, or ask a manager.';
			throw new ServiceError(409, message, { fields: { email: message } });
		}
		throw e;
	}
}

const registrationThrottled = (seconds: number) =>
	`Too many registration attempts. Try again in ${waitInWords(seconds)}.`;

export type SignInResult =
	| { kind: 'ok'; userId: number }
	| { kind: 'invalid' }
	| { kind: 'pending' }
	| { kind: 'invited' }
	| { kind: 'suspended' }
	| { kind: 'throttled'; retryAfterSeconds: number };

/**
 * Checks a password. An unknown e-mail and a wrong password get the same answer and take
 * the same time; only with the right password does a pending, invited or deactivated
 * account say so. Only an active account signs in. The attempt is counted before the
 * password is checked and given back when it was right (server/rate-limit.ts); `device`
 * is the browser's device cookie, if any.
 */
export async function checkSignIn(
	email: string,
	password: string,
	address: string,
	device: string | null = null
): Promise<SignInResult> {
	const throttle = await takeSignIn(email, address, device);
	if (!throttle.ok) return { kind: 'throttled', retryAfterSeconds: throttle.retryAfterSeconds };

	const [user] = await db
		.select({ id: users.id, passwordHash: users.passwordHash, status: users.status })
		.from(users)
		.where(eq(users.email, email));
	const valid = user
		? await verifyPassword(user.passwordHash, password)
		: await verifyDecoy(password);
	// A wrong password keeps its point; a right one gives it back.
	if (!user || !valid) return { kind: 'invalid' };
	await throttle.refund();
	if (user.status !== 'active') return { kind: user.status };
	return { kind: 'ok', userId: user.id };
}

export const signInMessages = {
	invalid: 'That e-mail and password do not match an account.',
	pending:
		"Your account is waiting for approval by your group's PI or a facility manager. You can sign in once it is approved.",
	invited:
		'This account is not set up yet: choose your password from the invitation e-mail, or ask an admin to send it again.',
	suspended: 'This account has been deactivated. Ask a site administrator if you need it again.',
	throttled: (seconds: number) => `Too many failed sign-ins. Try again in ${waitInWords(seconds)}.`
};

/** The groups a user leads as PI, as a query (the shell reads it inside its one statement). */
export const ledByQuery = (userId: number) =>
	db
		.select({ id: researchGroups.id, name: researchGroups.name })
		.from(researchGroups)
		.where(eq(researchGroups.piUserId, userId));

/** The groups a user leads as PI. */
export async function groupsLedBy(userId: number) {
	return ledByQuery(userId);
}

/** The user's profile as /api/me and the shell show it. */
export async function profile(userId: number) {
	const [user] = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			status: users.status
		})
		.from(users)
		.where(eq(users.id, userId));
	if (!user) throw notFound('The user');
	const groups = await db
		.select({
			id: researchGroups.id,
			name: researchGroups.name,
			costCentre: researchGroups.costCentre,
			piUserId: researchGroups.piUserId,
			status: groupMemberships.status
		})
		.from(groupMemberships)
		.innerJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
		.where(and(eq(groupMemberships.userId, userId), eq(groupMemberships.status, 'active')))
		// The group joined first leads: it is the one bookings are billed to by default.
		.orderBy(asc(groupMemberships.id));
	const led = await groupsLedBy(userId);
	const primary = groups[0] ?? null;
	return {
		...user,
		group: primary && {
			id: primary.id,
			name: primary.name,
			costCentre: primary.costCentre,
			isPi: primary.piUserId === userId
		},
		groups: groups.map((g) => ({ id: g.id, name: g.name, isPi: g.piUserId === userId })),
		leads: led
	};
}

export type PendingAccount = {
	userId: number;
	name: string;
	email: string;
	registeredAt: Date;
	groupId: number;
	groupName: string;
};

/** Pending registrations the actor may decide: all for managers, their groups' for PIs. */
export async function pendingAccountsFor(actor: Actor): Promise<PendingAccount[]> {
	const base = db
		.select({
			userId: users.id,
			name: users.name,
			email: users.email,
			registeredAt: users.createdAt,
			groupId: researchGroups.id,
			groupName: researchGroups.name
		})
		.from(users)
		.innerJoin(groupMemberships, eq(groupMemberships.userId, users.id))
		.innerJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
		.$dynamic();
	const pending = and(eq(users.status, 'pending'), eq(groupMemberships.status, 'pending'));
	const rows = hasRole(actor.role, 'manager')
		? await base.where(pending).orderBy(asc(users.createdAt))
		: await base
				.where(and(pending, eq(researchGroups.piUserId, actor.id)))
				.orderBy(asc(users.createdAt));
	return rows;
}

/**
 * How many registrations wait for the actor (every one for a manager, their groups' for a
 * PI, none for anyone else): one COUNT, as a query the shell reads inside its one statement.
 */
export const pendingForQuery = (actor: Actor) => {
	const pending = and(eq(users.status, 'pending'), eq(groupMemberships.status, 'pending'));
	return db
		.select({ n: count() })
		.from(users)
		.innerJoin(groupMemberships, eq(groupMemberships.userId, users.id))
		.innerJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
		.where(
			hasRole(actor.role, 'manager') ? pending : and(pending, eq(researchGroups.piUserId, actor.id))
		);
};

/** How many registrations wait for the actor: one COUNT, for the badge on every page. */
export async function countPendingFor(actor: Actor): Promise<number> {
	const [row] = await pendingForQuery(actor);
	return row?.n ?? 0;
}

/** May the actor decide this pending account? Managers always; a PI for their own group. */
async function decidablePending(actor: Actor, userId: number) {
	const [row] = await db
		.select({
			status: users.status,
			membershipId: groupMemberships.id,
			piUserId: researchGroups.piUserId,
			groupId: researchGroups.id
		})
		.from(users)
		.leftJoin(groupMemberships, eq(groupMemberships.userId, users.id))
		.leftJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
		.where(eq(users.id, userId));
	if (!row) throw notFound('The account');
	if (row.status !== 'pending')
		throw new ServiceError(409, 'This account has already been decided.');
	if (!hasRole(actor.role, 'manager') && row.piUserId !== actor.id) {
		throw forbidden("Only the group's PI or a facility manager can decide this account.");
	}
	return row;
}

export async function approveAccount(actor: Actor, userId: number) {
	const row = await decidablePending(actor, userId);
	await transaction(async (tx) => {
		const now = new Date();
		await tx
			.update(users)
			.set({ status: 'active', approvedAt: now, approvedBy: actor.id })
			.where(and(eq(users.id, userId), eq(users.status, 'pending')));
		if (row.membershipId) {
			await tx
				.update(groupMemberships)
				.set({ status: 'active', decidedAt: now, decidedBy: actor.id })
				.where(eq(groupMemberships.id, row.membershipId));
		}
		await audit(tx, {
			actorId: actor.id,
			action: 'user.approved',
			entity: 'user',
			entityId: userId,
			details: { groupId: row.groupId }
		});
	});
}

/** Declining removes the pending account, so the person may register again. */
export async function declineAccount(actor: Actor, userId: number) {
	const row = await decidablePending(actor, userId);
	await transaction(async (tx) => {
		const [removed] = await tx
			.select({ email: users.email })
			.from(users)
			.where(eq(users.id, userId));
		await tx.delete(users).where(and(eq(users.id, userId), eq(users.status, 'pending')));
		await audit(tx, {
			actorId: actor.id,
			action: 'user.declined',
			entity: 'user',
			entityId: userId,
			details: { groupId: row.groupId, email: removed?.email }
		});
	});
}

/**
 * The current password is checked like a sign-in, against the same budgets (the same secret
 * is being guessed); the new one is hashed only after that passed.
 */
export async function changePassword(
	userId: number,
	current: string,
	next: string,
	address: string
) {
	const [user] = await db
		.select({ email: users.email, name: users.name, passwordHash: users.passwordHash })
		.from(users)
		.where(eq(users.id, userId));
	if (!user) throw notFound('The user');
	const throttle = await takePasswordCheck(user.email, address);
	if (!throttle.ok) {
		const wait = throttle.retryAfterSeconds;
		throw tooMany(`Too many wrong passwords. Try again in ${waitInWords(wait)}.`, wait);
	}
	if (!(await verifyPassword(user.passwordHash, current))) {
		const message = 'That is not your current password.';
		throw new ServiceError(400, message, { fields: { currentPassword: message } });
	}
	await throttle.refund();
	await checkNewPassword(next, user, 'newPassword');
	const passwordHash = await hashPassword(next);
	await transaction(async (tx) => {
		await tx.update(users).set({ passwordHash }).where(eq(users.id, userId));
		await audit(tx, {
			actorId: userId,
			action: 'user.password_changed',
			entity: 'user',
			entityId: userId
		});
	});
}

/** Admins only. An admin cannot lower their own role, so a site always keeps one. */
export async function setRole(actor: Actor, userId: number, role: Role) {
	if (actor.role !== 'admin') throw forbidden('Only an admin can change roles.');
	if (actor.id === userId && role !== 'admin') {
		throw new ServiceError(409, 'You cannot lower your own role; ask another admin.');
	}
	const [user] = await db.select({ role: users.role }).from(users).where(eq(users.id, userId));
	if (!user) throw notFound('The user');
	if (user.role === role) return;
	await transaction(async (tx) => {
		await tx.update(users).set({ role }).where(eq(users.id, userId));
		await audit(tx, {
			actorId: actor.id,
			action: 'user.role_changed',
			entity: 'user',
			entityId: userId,
			details: { from: user.role, to: role }
		});
	});
}

/** Which e-mails the user wants; cancellations are always sent and have no switch. */
export async function setEmailPreferences(userId: number, prefs: { confirmations: boolean }) {
	await db
		.update(users)
		.set({ emailConfirmations: prefs.confirmations })
		.where(eq(users.id, userId));
}

export async function emailPreferences(userId: number) {
	const [row] = await db
		.select({ confirmations: users.emailConfirmations })
		.from(users)
		.where(eq(users.id, userId));
	return row ?? { confirmations: true };
}
