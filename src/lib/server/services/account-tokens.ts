// Single-use links sent by e-mail (table account_tokens): a password reset, valid an hour,
// and an invitation to set a first password, valid a week. The link carries 32 random bytes;
// only their SHA-256 is stored, so the table alone opens no account.
import { createHash, randomBytes } from 'node:crypto';
import { and, count, eq, gt, isNull } from 'drizzle-orm';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { lockUser } from '../db/locks';
import {
	accountTokens,
	groupMemberships,
	researchGroups,
	sessions,
	users,
	type Role
} from '../db/schema';
import { transaction } from '../db/transaction';
import { invitation, passwordReset } from '../mail/messages';
import { enqueue } from '../mail/outbox';
import { hashPassword } from '../password';
import { checkNewPassword } from '../password-policy';
import { takeResetRequest, tooMany, waitInWords } from '../rate-limit';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';

export type TokenKind = 'reset' | 'invite';

const HOUR = 3_600_000;
export const RESET_VALID_MS = HOUR;
export const INVITE_VALID_MS = 7 * 24 * HOUR;
/** Unused reset links one person may hold at a time; more requests send nothing. */
const MAX_OPEN_RESETS = 3;

const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');
/** 32 bytes in base64url are 43 characters; anything else opens nothing and costs no query. */
const looksLikeToken = (token: string) => /^[A-Za-z0-9_-]{43}$/.test(token);

const linkFor = (kind: TokenKind, token: string) =>
	`${config.origin}/${kind === 'reset' ? 'reset' : 'invite'}/${token}`;

/** Stores a new token's hash for the user, in the caller's transaction; returns the token. */
async function issue(
	tx: Transaction,
	userId: number,
	kind: TokenKind,
	createdBy: number | null,
	now: Date
) {
	const token = randomBytes(32).toString('base64url');
	const expiresAt = new Date(now.getTime() + (kind === 'reset' ? RESET_VALID_MS : INVITE_VALID_MS));
	const [row] = await tx
		.insert(accountTokens)
		.values({ userId, kind, tokenHash: hashToken(token), expiresAt, createdBy, createdAt: now })
		.$returningId();
	return { id: row.id, token, link: linkFor(kind, token), expiresAt };
}

/** Queues a reset link to an active person, with its audit entry. */
async function sendReset(
	tx: Transaction,
	person: { id: number; name: string; email: string },
	by: number | null,
	now: Date
) {
	const issued = await issue(tx, person.id, 'reset', by, now);
	await enqueue(
		tx,
		person,
		passwordReset(person, issued.link, issued.expiresAt),
		`account-token:${issued.id}`
	);
	await audit(tx, {
		actorId: by ?? person.id,
		action: by ? 'user.reset_link_sent' : 'user.reset_requested',
		entity: 'user',
		entityId: person.id,
		details: { expiresAt: issued.expiresAt.toISOString() }
	});
}

/**
 * "Forgot your password?": sends a link when the address belongs to an active account and
 * does nothing otherwise. The caller answers the same either way, so the form tells no one
 * which addresses have accounts. Requests are counted per client address and per e-mail
 * before the account is looked up, known or not alike (429 with the same words for both).
 */
export async function requestPasswordReset(
	email: string,
	address: string,
	now = new Date()
): Promise<void> {
	const throttle = await takeResetRequest(email, address);
	if (!throttle.ok) {
		const wait = throttle.retryAfterSeconds;
		throw tooMany(`Too many reset requests. Try again in ${waitInWords(wait)}.`, wait);
	}
	await transaction(async (tx) => {
		// A certified lock (db/locks.ts): a request on another node counts this one's link.
		if (!(await lockUser(tx, { email }))) return;
		const [person] = await tx
			.select({ id: users.id, name: users.name, email: users.email, status: users.status })
			.from(users)
			.where(eq(users.email, email))
			.for('update');
		if (!person || person.status !== 'active') return;
		// A flood of requests must not become a flood of e-mails to the person.
		const [open] = await tx
			.select({ n: count() })
			.from(accountTokens)
			.where(
				and(
					eq(accountTokens.userId, person.id),
					eq(accountTokens.kind, 'reset'),
					isNull(accountTokens.usedAt),
					gt(accountTokens.expiresAt, now)
				)
			);
		if ((open?.n ?? 0) >= MAX_OPEN_RESETS) return;
		await sendReset(tx, person, null, now);
	});
}

/** An admin sends an active person a reset link (they forgot, and asked at the desk). */
export async function sendResetLink(actor: Actor, userId: number, now = new Date()) {
	if (actor.role !== 'admin') throw forbidden('Only an admin can send reset links.');
	await transaction(async (tx) => {
		if (!(await lockUser(tx, userId))) throw notFound('The person');
		const [person] = await tx
			.select({ id: users.id, name: users.name, email: users.email, status: users.status })
			.from(users)
			.where(eq(users.id, userId))
			.for('update');
		if (!person) throw notFound('The person');
		if (person.status !== 'active')
			throw new ServiceError(409, 'Only an active account can be sent a reset link.');
		await sendReset(tx, person, actor.id, now);
	});
}

export type LinkState =
	{ state: 'valid'; name: string; email: string } | { state: 'used' | 'expired' | 'unknown' };

/** What a link opens, for its page: valid (with whose account), used, expired or unknown. */
export async function linkState(kind: TokenKind, token: string, now = new Date()) {
	if (!looksLikeToken(token)) return { state: 'unknown' } as LinkState;
	const [row] = await db
		.select({
			expiresAt: accountTokens.expiresAt,
			usedAt: accountTokens.usedAt,
			name: users.name,
			email: users.email,
			status: users.status
		})
		.from(accountTokens)
		.innerJoin(users, eq(users.id, accountTokens.userId))
		.where(and(eq(accountTokens.tokenHash, hashToken(token)), eq(accountTokens.kind, kind)));
	return judge(kind, row, now);
}

type TokenRow = {
	expiresAt: Date;
	usedAt: Date | null;
	status: string;
	name?: string;
	email?: string;
};

/** The one rule for what a link still opens, read by its page and again when it is spent. */
function judge(kind: TokenKind, row: TokenRow | undefined, now: Date): LinkState {
	if (!row || !row.status) return { state: 'unknown' };
	if (row.usedAt) return { state: 'used' };
	// An invitation is spent once the person is in; a reset needs an account that may sign in.
	if (kind === 'invite' && row.status === 'active') return { state: 'used' };
	if (row.status !== (kind === 'invite' ? 'invited' : 'active')) return { state: 'unknown' };
	if (row.expiresAt <= now) return { state: 'expired' };
	return { state: 'valid', name: row.name ?? '', email: row.email ?? '' };
}

export const linkMessages = {
	used: 'This link has already been used. Each link works once.',
	expired: 'This link has expired.',
	unknown: 'This link is not valid. It may have been copied incompletely.'
} as const;

/**
 * Spends a link: locks its row, checks it again (two tabs, one link), sets the password,
 * and ends every session of the person. Returns whose link it was.
 */
async function spend(
	tx: Transaction,
	kind: TokenKind,
	token: string,
	passwordHash: string,
	now: Date
) {
	const refused = (state: 'used' | 'expired' | 'unknown') =>
		new ServiceError(state === 'unknown' ? 404 : 410, linkMessages[state], { state });
	if (!looksLikeToken(token)) throw refused('unknown');
	const byHash = and(eq(accountTokens.tokenHash, hashToken(token)), eq(accountTokens.kind, kind));
	const [found] = await tx
		.select({ userId: accountTokens.userId })
		.from(accountTokens)
		.where(byHash);
	if (!found) throw refused('unknown');
	// The person's row first, then their links: the order deactivation takes them in. Both
	// are updated below, so on a cluster these locks certify as they are.
	const [person] = await tx
		.select({ status: users.status })
		.from(users)
		.where(eq(users.id, found.userId))
		.for('update');
	const [row] = await tx
		.select({
			id: accountTokens.id,
			userId: accountTokens.userId,
			createdBy: accountTokens.createdBy,
			expiresAt: accountTokens.expiresAt,
			usedAt: accountTokens.usedAt
		})
		.from(accountTokens)
		.where(byHash)
		.for('update');
	const verdict = judge(kind, row && person ? { ...row, status: person.status } : undefined, now);
	if (verdict.state !== 'valid') throw refused(verdict.state);
	// Every open link of this kind goes with it: an older reset e-mail opens nothing now.
	await tx
		.update(accountTokens)
		.set({ usedAt: now })
		.where(
			and(
				eq(accountTokens.userId, row!.userId),
				eq(accountTokens.kind, kind),
				isNull(accountTokens.usedAt)
			)
		);
	await tx.update(users).set({ passwordHash }).where(eq(users.id, row!.userId));
	await tx.delete(sessions).where(eq(sessions.userId, row!.userId));
	return row!;
}

/**
 * The password rule against the person a link opens. A link that opens nothing is left to
 * `spend`, which refuses it in its own words.
 */
async function checkLinkPassword(kind: TokenKind, token: string, password: string, now: Date) {
	const link = await linkState(kind, token, now);
	if (link.state === 'valid') await checkNewPassword(password, link);
}

/** Sets a new password from a reset link; every session of the person ends. */
export async function resetPassword(token: string, password: string, now = new Date()) {
	await checkLinkPassword('reset', token, password, now);
	const passwordHash = await hashPassword(password);
	await transaction(async (tx) => {
		const row = await spend(tx, 'reset', token, passwordHash, now);
		await audit(tx, {
			actorId: row.userId,
			action: 'user.password_reset',
			entity: 'user',
			entityId: row.userId
		});
	});
}

/** Sets the first password from an invitation: the person becomes active. Returns their id. */
export async function acceptInvitation(token: string, password: string, now = new Date()) {
	await checkLinkPassword('invite', token, password, now);
	const passwordHash = await hashPassword(password);
	return transaction(async (tx) => {
		const row = await spend(tx, 'invite', token, passwordHash, now);
		await tx
			.update(users)
			.set({ status: 'active', approvedAt: now, approvedBy: row.createdBy })
			.where(eq(users.id, row.userId));
		await audit(tx, {
			actorId: row.userId,
			action: 'user.invitation_accepted',
			entity: 'user',
			entityId: row.userId,
			details: { invitedBy: row.createdBy }
		});
		return row.userId;
	});
}

export type Invitation = { name: string; email: string; role: Role; groupId?: number };

/**
 * An admin invites a person: an account with status 'invited' and a password no one knows,
 * membership of the group if one is named, and an e-mail with a link valid for a week.
 */
export async function invite(actor: Actor & { name: string }, input: Invitation, now = new Date()) {
	if (actor.role !== 'admin') throw forbidden('Only an admin can invite people.');
	let groupName: string | null = null;
	if (input.groupId) {
		const [group] = await db
			.select({ name: researchGroups.name })
			.from(researchGroups)
			.where(eq(researchGroups.id, input.groupId));
		if (!group)
			throw new ServiceError(400, 'Choose one of the listed groups.', {
				fields: { groupId: 'Choose one of the listed groups.' }
			});
		groupName = group.name;
	}
	// Unusable: nobody ever learns this secret, and sign-in refuses 'invited' anyway.
	const passwordHash = await hashPassword(randomBytes(32).toString('base64url'));
	try {
		return await transaction(async (tx) => {
			const [created] = await tx
				.insert(users)
				.values({
					name: input.name,
					email: input.email,
					role: input.role,
					status: 'invited',
					passwordHash
				})
				.$returningId();
			if (input.groupId) {
				// The admin has decided it: no join request for the PI to approve.
				await tx.insert(groupMemberships).values({
					groupId: input.groupId,
					userId: created.id,
					status: 'active',
					decidedAt: now,
					decidedBy: actor.id
				});
			}
			await sendInvitation(tx, actor, { id: created.id, ...input }, groupName, now);
			return created.id;
		});
	} catch (e) {
		if (isDuplicateKey(e)) {
			const message = 'Someone with this e-mail already has an account.';
			throw new ServiceError(409, message, { fields: { email: message } });
		}
		throw e;
	}
}

async function sendInvitation(
	tx: Transaction,
	actor: Actor & { name: string },
	person: { id: number; name: string; email: string; role: Role; groupId?: number },
	groupName: string | null,
	now: Date
) {
	const issued = await issue(tx, person.id, 'invite', actor.id, now);
	const message = invitation(person, {
		by: actor.name,
		role: person.role,
		groupName,
		link: issued.link,
		expiresAt: issued.expiresAt
	});
	await enqueue(tx, person, message, `account-token:${issued.id}`);
	await audit(tx, {
		actorId: actor.id,
		action: 'user.invited',
		entity: 'user',
		entityId: person.id,
		details: {
			role: person.role,
			groupId: person.groupId ?? null,
			expiresAt: issued.expiresAt.toISOString()
		}
	});
}

/** A new invitation link for someone who has not accepted yet; older links stop working. */
export async function resendInvitation(
	actor: Actor & { name: string },
	userId: number,
	now = new Date()
) {
	if (actor.role !== 'admin') throw forbidden('Only an admin can invite people.');
	await transaction(async (tx) => {
		if (!(await lockUser(tx, userId))) throw notFound('The person');
		const [person] = await tx
			.select({
				id: users.id,
				name: users.name,
				email: users.email,
				role: users.role,
				status: users.status
			})
			.from(users)
			.where(eq(users.id, userId))
			.for('update');
		if (!person) throw notFound('The person');
		if (person.status !== 'invited')
			throw new ServiceError(409, 'This person has already accepted their invitation.');
		await tx
			.update(accountTokens)
			.set({ usedAt: now })
			.where(
				and(
					eq(accountTokens.userId, userId),
					eq(accountTokens.kind, 'invite'),
					isNull(accountTokens.usedAt)
				)
			);
		const [group] = await tx
			.select({ name: researchGroups.name, id: researchGroups.id })
			.from(groupMemberships)
			.innerJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
			.where(and(eq(groupMemberships.userId, userId), eq(groupMemberships.status, 'active')))
			.limit(1);
		await sendInvitation(tx, actor, { ...person, groupId: group?.id }, group?.name ?? null, now);
	});
}

/** Every open link of the person stops working (they were deactivated). */
export async function revokeLinks(tx: Transaction, userId: number, now: Date) {
	await tx
		.update(accountTokens)
		.set({ usedAt: now })
		.where(and(eq(accountTokens.userId, userId), isNull(accountTokens.usedAt)));
}
