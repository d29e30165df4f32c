// The admin's part of every person's journey: deactivation and reactivation, password reset
// by e-mail link, invitations, a group's PI set by an admin, and the audit screen.
import { afterAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { and, desc, eq, inArray } from 'drizzle-orm';
import {
	accountTokens,
	auditLog,
	bookings,
	groupMemberships,
	outbox,
	researchGroups,
	users
} from '../../src/lib/server/db/schema';
import { renderRow } from '../../src/lib/server/mail/render';
import {
	certifiedMemberAndBox,
	closeTestDb,
	makeGroup,
	makeUser,
	testDb,
	uniqueEmail,
	userIdByEmail
} from '../support/db';
import { Client, baseUrl, errorOf, signedIn } from '../support/http';
import { sunkMail } from '../support/mail';
import { slot } from '../support/time';

afterAll(closeTestDb);

const NEW_PASSWORD = 'a-brand-new-password';

/** The newest message of `kind` queued to the person, straight from the outbox. */
async function lastMail(userId: number, kind: string) {
	const [row] = await testDb()
		.select()
		.from(outbox)
		.where(and(eq(outbox.recipientId, userId), eq(outbox.kind, kind)))
		.orderBy(desc(outbox.id))
		.limit(1);
	if (!row) throw new Error(`no ${kind} mail for user ${userId}`);
	return row;
}

/** The token in the link of the newest reset or invitation mail to the person. */
async function linkToken(userId: number, kind: 'password_reset' | 'invitation') {
	const mail = await lastMail(userId, kind);
	const path = kind === 'password_reset' ? 'reset' : 'invite';
	const { text } = renderRow(mail);
	const match = new RegExp(`/${path}/([A-Za-z0-9_-]{43})(?![A-Za-z0-9_-])`).exec(text);
	if (!match) throw new Error(`no link in: ${text}`);
	return { token: match[1], mail };
}

/** The status of a sign-in through the API, without keeping the session. */
async function signInStatus(who: { email: string; password: string }) {
	const r = await new Client().post('/api/session', { email: who.email, password: who.password });
	return r.status;
}

const hashOf = (token: string) => createHash('sha256').update(token).digest('hex');

async function statusOf(userId: number) {
	const [row] = await testDb()
		.select({ status: users.status })
		.from(users)
		.where(eq(users.id, userId));
	return row.status;
}

/** A deactivation as an admin does it: the question first, then the confirmed post. */
async function deactivate(admin: Client, userId: number) {
	const asked = await admin.form('/admin/users?/deactivate', { userId });
	expect(asked.status).toBe(200);
	const question = await asked.text();
	expect(question).toContain('Yes, deactivate');
	return admin.form('/admin/users?/deactivate', { userId, confirmed: 'yes' });
}

describe('deactivation', () => {
	it('ends every session at once, cancels bookings still to come with notices, and shuts sign-in and the feed', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const { user: member, boxId } = await certifiedMemberAndBox();
		const laptop = await signedIn(member);
		const phone = await signedIn(member);

		const feed = await laptop.post('/api/me/feed-token');
		expect(feed.status).toBe(201);
		const feedPath = new URL(((await feed.json()) as { userFeedUrl: string }).userFeedUrl).pathname;
		expect((await fetch(baseUrl + feedPath)).status).toBe(200);

		const ids: number[] = [];
		for (const days of [3, 4]) {
			const r = await laptop.post('/api/bookings', {
				boxId,
				...slot(days, 10),
				purpose: 'Before deactivation'
			});
			expect(r.status).toBe(201);
			ids.push(((await r.json()) as { booking: { id: number } }).booking.id);
		}
		// One already under way is left to finish (and be billed as used).
		const now = Date.now();
		const [running] = await testDb()
			.insert(bookings)
			.values({
				boxId,
				userId: member.id,
				startAt: new Date(now - 30 * 60_000),
				endAt: new Date(now + 30 * 60_000),
				blockedUntil: new Date(now + 30 * 60_000),
				purpose: 'Under way',
				status: 'confirmed',
				// Checked in, so the scheduler's no-show sweep leaves it alone.
				confirmedAt: new Date(now - 60 * 60_000),
				checkInAt: new Date(now - 29 * 60_000)
			})
			.$returningId();

		// Asking changes nothing: the question names what will be cancelled.
		const asked = await admin.form('/admin/users?/deactivate', { userId: member.id });
		expect(asked.status).toBe(200);
		expect(await asked.text()).toContain('2 bookings still to come are cancelled');
		expect((await laptop.get('/api/me')).status).toBe(200);

		const done = await admin.form('/admin/users?/deactivate', {
			userId: member.id,
			confirmed: 'yes'
		});
		expect(done.status).toBe(200);
		expect(await statusOf(member.id)).toBe('suspended');

		// Both devices are signed out at once.
		for (const client of [laptop, phone]) {
			const me = await client.get('/api/me');
			expect(me.status).toBe(401);
			expect((await errorOf(me)).code).toBe('unauthenticated');
		}

		const rows = await testDb().select().from(bookings).where(inArray(bookings.id, ids));
		expect(rows).toHaveLength(2);
		for (const b of rows) {
			expect(b).toMatchObject({
				status: 'cancelled',
				cancelCause: 'manager',
				cancelReason: 'Account deactivated',
				sequence: 1
			});
		}
		const [stillRunning] = await testDb()
			.select({ status: bookings.status })
			.from(bookings)
			.where(eq(bookings.id, running.id));
		expect(stillRunning.status).toBe('confirmed');

		const notices = await testDb()
			.select()
			.from(outbox)
			.where(
				inArray(
					outbox.dedupeKey,
					ids.map((id) => `booking:${id}:cancelled:1`)
				)
			);
		expect(notices).toHaveLength(2);
		for (const n of notices) {
			expect(n.toAddress).toBe(member.email);
			expect(n.icsMethod).toBe('CANCEL');
			const { text, ics } = renderRow(n);
			expect(ics).toContain('SEQUENCE:1');
			expect(text).toContain('Reason: Account deactivated');
			// They can no longer book, so the notice offers no rebooking.
			expect(text).not.toContain('Rebook');
		}

		const signIn = await new Client().post('/api/session', {
			email: member.email,
			password: member.password
		});
		expect(signIn.status).toBe(403);
		expect((await errorOf(signIn)).message).toMatch(/deactivated/);
		expect((await fetch(baseUrl + feedPath)).status).toBe(404);

		const [entry] = await testDb()
			.select()
			.from(auditLog)
			.where(
				and(eq(auditLog.action, 'user.deactivated'), eq(auditLog.entityId, String(member.id)))
			);
		expect(entry.details).toMatchObject({ cancelledBookingIds: expect.arrayContaining(ids) });
	});

	it('reactivation lets the person sign in again', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const member = await makeUser('member');
		expect((await deactivate(admin, member.id)).status).toBe(200);
		expect(await signInStatus(member)).toBe(403);

		const r = await admin.form('/admin/users?/reactivate', { userId: member.id });
		expect(r.status).toBe(200);
		expect(await statusOf(member.id)).toBe('active');
		const back = await signedIn(member);
		expect((await back.get('/api/me')).status).toBe(200);
	});

	it('an admin cannot deactivate themself', async () => {
		const me = await makeUser('admin');
		const admin = await signedIn(me);
		const r = await admin.form('/admin/users?/deactivate', { userId: me.id, confirmed: 'yes' });
		expect(r.status).toBe(409);
		expect(await statusOf(me.id)).toBe('active');
		expect((await admin.get('/api/me')).status).toBe(200);
	});
});

describe('password reset by e-mail link', () => {
	it('answers known and unknown addresses alike, and the link works once', async () => {
		const member = await makeUser('member');
		const signedInBefore = await signedIn(member);
		const visitor = new Client();

		const known = await visitor.form('/reset', { email: member.email });
		const unknown = await visitor.form('/reset', { email: uniqueEmail('nobody') });
		expect([known.status, unknown.status]).toEqual([200, 200]);
		const sameAnswer = /belongs to an account, a link to choose a new password is on its way/;
		expect(await known.text()).toMatch(sameAnswer);
		expect(await unknown.text()).toMatch(sameAnswer);

		const { token, mail } = await linkToken(member.id, 'password_reset');
		// Only the token's SHA-256 is kept.
		const [stored] = await testDb()
			.select({ tokenHash: accountTokens.tokenHash, expiresAt: accountTokens.expiresAt })
			.from(accountTokens)
			.where(eq(accountTokens.tokenHash, hashOf(token)));
		expect(stored.expiresAt.getTime() - Date.now()).toBeLessThanOrEqual(3_600_000);
		expect(stored.expiresAt.getTime() - Date.now()).toBeGreaterThan(3_500_000);
		// It reaches the mail sink.
		await expect
			.poll(
				() =>
					sunkMail().filter(
						(m) => m.messageId.startsWith(`<outbox-${mail.id}.`) && m.to.includes(member.email)
					).length,
				{ timeout: 20_000, interval: 100 }
			)
			.toBe(1);

		expect(await (await visitor.get(`/reset/${token}`)).text()).toContain('Choose a new password');

		const tooShort = await visitor.form(`/reset/${token}`, {
			password: 'short',
			confirmPassword: 'short'
		});
		expect(tooShort.status).toBe(400);
		expect(await tooShort.text()).toContain('Use at least 12 characters.');

		const set = await visitor.form(`/reset/${token}`, {
			password: NEW_PASSWORD,
			confirmPassword: NEW_PASSWORD
		});
		expect(set.status).toBe(200);
		expect(await set.text()).toContain('Your new password is set');

		// Every session ended; the old password no longer opens the account, the new one does.
		expect((await signedInBefore.get('/api/me')).status).toBe(401);
		expect(await signInStatus(member)).toBe(401);
		await signedIn({ email: member.email, password: NEW_PASSWORD });

		const again = await visitor.form(`/reset/${token}`, {
			password: 'another-new-password',
			confirmPassword: 'another-new-password'
		});
		expect(again.status).toBe(410);
		const page = await (await visitor.get(`/reset/${token}`)).text();
		expect(page).toContain('This link has already been used');
		expect(page).toContain('href="/reset"');
	});

	it('refuses an expired link and offers a new one', async () => {
		const member = await makeUser('member');
		const visitor = new Client();
		await visitor.form('/reset', { email: member.email });
		const { token } = await linkToken(member.id, 'password_reset');
		await testDb()
			.update(accountTokens)
			.set({ expiresAt: new Date(Date.now() - 60_000) })
			.where(eq(accountTokens.tokenHash, hashOf(token)));

		const page = await (await visitor.get(`/reset/${token}`)).text();
		expect(page).toContain('This link has expired');
		expect(page).toContain('href="/reset"');
		const r = await visitor.form(`/reset/${token}`, {
			password: NEW_PASSWORD,
			confirmPassword: NEW_PASSWORD
		});
		expect(r.status).toBe(410);
		await signedIn(member);
	});

	it('an admin sends a reset link from /admin/users', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const member = await makeUser('member');
		const r = await admin.form('/admin/users?/sendReset', { userId: member.id });
		expect(r.status).toBe(200);
		const { token } = await linkToken(member.id, 'password_reset');
		const set = await new Client().form(`/reset/${token}`, {
			password: NEW_PASSWORD,
			confirmPassword: NEW_PASSWORD
		});
		expect(set.status).toBe(200);
		await signedIn({ email: member.email, password: NEW_PASSWORD });
	});
});

describe('invitations', () => {
	it('an invited person sets a password, joins the group and signs in', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const group = await makeGroup('invite');
		const email = uniqueEmail('invitee');
		const r = await admin.form('/admin/users?/invite', {
			name: 'Ida Invitee',
			email,
			role: 'trainer',
			groupId: group.id
		});
		expect(r.status).toBe(200);
		const id = await userIdByEmail(email);
		expect(await statusOf(id)).toBe('invited');
		// Nobody knows the placeholder password; an invited account cannot sign in.
		expect(await signInStatus({ email, password: 'anything-at-all' })).toBe(401);

		const { token, mail } = await linkToken(id, 'invitation');
		expect(mail.toAddress).toBe(email);
		const [stored] = await testDb()
			.select({ expiresAt: accountTokens.expiresAt })
			.from(accountTokens)
			.where(eq(accountTokens.tokenHash, hashOf(token)));
		expect(stored.expiresAt.getTime() - Date.now()).toBeGreaterThan(6.9 * 86_400_000);

		const invitee = new Client();
		expect(await (await invitee.get(`/invite/${token}`)).text()).toContain(email);
		const accepted = await invitee.form(`/invite/${token}`, {
			password: NEW_PASSWORD,
			confirmPassword: NEW_PASSWORD
		});
		expect(accepted.status).toBe(303);
		expect(accepted.headers.get('location')).toBe('/');
		const me = await invitee.get('/api/me');
		expect(me.status).toBe(200);
		expect(await me.json()).toMatchObject({
			email,
			name: 'Ida Invitee',
			role: 'trainer',
			group: { id: group.id }
		});
		const [membership] = await testDb()
			.select({ status: groupMemberships.status })
			.from(groupMemberships)
			.where(and(eq(groupMemberships.userId, id), eq(groupMemberships.groupId, group.id)));
		expect(membership.status).toBe('active');
		await signedIn({ email, password: NEW_PASSWORD });

		const again = await new Client().form(`/invite/${token}`, {
			password: 'another-new-password',
			confirmPassword: 'another-new-password'
		});
		expect(again.status).toBe(410);
	});

	it('an e-mail that already has an account is a field error', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const existing = await makeUser('member');
		const r = await admin.form('/admin/users?/invite', {
			name: 'Twice Invited',
			email: existing.email,
			role: 'member'
		});
		expect(r.status).toBe(409);
		const page = await r.text();
		expect(page).toContain('id="invite-email-error"');
		expect(page).toContain('Someone with this e-mail already has an account.');
	});
});

describe('who may do it', () => {
	it('a member and a manager get 403 on every admin action, and nothing changes', async () => {
		const target = await makeUser('member');
		for (const role of ['member', 'manager'] as const) {
			const client = await signedIn(await makeUser(role));
			const calls: [string, Record<string, string | number>][] = [
				['deactivate', { userId: target.id, confirmed: 'yes' }],
				['reactivate', { userId: target.id }],
				['sendReset', { userId: target.id }],
				['resendInvite', { userId: target.id }],
				['invite', { name: 'Not Allowed', email: uniqueEmail('nope'), role: 'member' }]
			];
			for (const [action, fields] of calls) {
				const r = await client.form(`/admin/users?/${action}`, fields);
				expect(r.status, `${role} on ${action}`).toBe(403);
			}
		}
		expect(await statusOf(target.id)).toBe('active');
		const queued = await testDb()
			.select({ id: outbox.id })
			.from(outbox)
			.where(eq(outbox.recipientId, target.id));
		expect(queued).toHaveLength(0);
	});

	it('an admin sets a group’s PI, as a manager can', async () => {
		const admin = await signedIn(await makeUser('admin'));
		const group = await makeGroup('pi');
		const next = await makeUser('member');
		const r = await admin.form(`/groups/${group.id}?/edit`, {
			name: group.name,
			costCentre: 'CC-TEST',
			piUserId: next.id
		});
		expect(r.status).toBe(200);
		const [row] = await testDb()
			.select({ piUserId: researchGroups.piUserId })
			.from(researchGroups)
			.where(eq(researchGroups.id, group.id));
		expect(row.piUserId).toBe(next.id);
	});
});

describe('audit screen', () => {
	/** "user #12" as the screen writes a record, whatever markup Svelte puts between. */
	const record = (id: number) => new RegExp(`user(?:<!---->)? #(?:<!---->)?${id}(?!\\d)`);

	it('filters by the person who acted, by record and by date; managers may read it, members not', async () => {
		const first = await makeUser('admin');
		const second = await makeUser('admin');
		const firstTarget = await makeUser('member');
		const secondTarget = await makeUser('member');
		await (
			await signedIn(first)
		).form('/admin/users?/role', {
			userId: firstTarget.id,
			role: 'trainer'
		});
		await (
			await signedIn(second)
		).form('/admin/users?/role', {
			userId: secondTarget.id,
			role: 'trainer'
		});

		const manager = await signedIn(await makeUser('manager'));
		const byFirst = await manager.get(`/admin/audit?actorId=${first.id}`);
		expect(byFirst.status).toBe(200);
		const page = await byFirst.text();
		expect(page).toMatch(record(firstTarget.id));
		expect(page).toContain('User: role changed');
		expect(page).not.toMatch(record(secondTarget.id));

		const aboutSecond = await (
			await manager.get(`/admin/audit?entity=user&entityId=${secondTarget.id}`)
		).text();
		expect(aboutSecond).toMatch(record(secondTarget.id));
		expect(aboutSecond).not.toMatch(record(firstTarget.id));

		const future = await (
			await manager.get(`/admin/audit?actorId=${first.id}&from=2999-01-01`)
		).text();
		expect(future).toContain('No entries match these filters.');

		const bad = await manager.get('/admin/audit?from=2026-02-30');
		expect(await bad.text()).toContain('There is no such date.');

		const member = await signedIn(await makeUser('member'));
		expect((await member.get('/admin/audit')).status).toBe(403);
	});
});
