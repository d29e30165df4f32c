// One password rule wherever a password is chosen (registration, a reset link, an invitation,
// the account page): long enough, not common or guessable by the strength estimator, not
// the person's e-mail or name; the reason shows under the field and nothing is changed.
import { afterAll, describe, expect, it } from 'vitest';
import { createHash, randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { accountTokens, users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeGroup, makeUser, testDb, uniqueEmail } from '../support/db';
import { AddressClient } from '../support/from-address';
import { Client, signedIn } from '../support/http';

afterAll(closeTestDb);

const STRONG = 'copper kettle under an orange lamp';
const COMMON = /one of the most common passwords/;
const EMAIL = 'It contains your e-mail address.';
const NAME = 'It is your name.';

/** A reset or invitation link for the person, as the e-mail would carry it. */
async function linkFor(userId: number, kind: 'reset' | 'invite') {
	const token = randomBytes(32).toString('base64url');
	await testDb()
		.insert(accountTokens)
		.values({
			userId,
			kind,
			tokenHash: createHash('sha256').update(token).digest('hex'),
			expiresAt: new Date(Date.now() + 3_600_000)
		});
	return `/${kind}/${token}`;
}

/** A person with a name long enough to be typed as a password. */
async function person(role: 'member' | 'trainer' = 'member') {
	const user = await makeUser(role);
	const name = `Wilhelmina Grabowski ${randomBytes(2).toString('hex')}`;
	await testDb().update(users).set({ name }).where(eq(users.id, user.id));
	return { ...user, name };
}

const hashOf = async (id: number) =>
	(await testDb().select({ h: users.passwordHash }).from(users).where(eq(users.id, id)))[0].h;

// From an address of its own: a wrong password here spends no budget other tests share.
const signInStatus = async (email: string, password: string) =>
	(await new AddressClient().post('/api/session', { email, password })).status;

describe('password policy', () => {
	it('registration refuses a common password and one containing the e-mail, saying why', async () => {
		const group = await makeGroup('pw-policy');
		const email = uniqueEmail('pw-reg');
		// From an address of its own: registrations are throttled per address.
		const visitor = new AddressClient();
		const attempt = (password: string) =>
			visitor.form('/register', { name: 'Rosalind Testfield', email, password, groupId: group.id });

		const common = await attempt('password1234');
		expect(common.status).toBe(400);
		expect(await common.text()).toMatch(COMMON);

		const own = await attempt(`${email}!`);
		expect(own.status).toBe(400);
		expect(await own.text()).toContain(EMAIL);

		expect(await testDb().select().from(users).where(eq(users.email, email))).toEqual([]);
	});

	it('a password change refuses the guessable, the e-mail and the name, under the new-password field', async () => {
		const user = await person();
		const client = await signedIn(user);
		const before = await hashOf(user.id);
		const change = (next: string) =>
			client.form('/account?/password', {
				currentPassword: user.password,
				newPassword: next,
				confirmPassword: next
			});

		for (const [next, reason] of [
			['aaaaaaaaaaaa', 'Repeated characters'],
			['password1234', 'most common passwords'],
			[`my ${user.email.toUpperCase()}`, EMAIL],
			[user.name.toLowerCase(), NAME]
		]) {
			const r = await change(next);
			expect(r.status, next).toBe(400);
			const page = await r.text();
			expect(page, next).toContain(reason);
			expect(page, next).toMatch(/id="field-newPassword-error"/);
		}
		expect(await hashOf(user.id)).toBe(before);

		expect((await change(STRONG)).status).toBe(200);
		expect(await signInStatus(user.email, STRONG)).toBe(200);
	});

	it('a reset link refuses a weak password and stays usable for a good one', async () => {
		const user = await person();
		const link = await linkFor(user.id, 'reset');
		const local = user.email.split('@')[0];

		const weak = await new Client().form(link, {
			password: 'qwertyuiop12',
			confirmPassword: 'qwertyuiop12'
		});
		expect(weak.status).toBe(400);
		expect(await weak.text()).toMatch(/id="field-password-error"/);

		const own = await new Client().form(link, {
			password: user.email,
			confirmPassword: user.email
		});
		expect(own.status).toBe(400);
		expect(await own.text()).toContain(EMAIL);

		const guessable = `${local}2026`;
		const mine = await new Client().form(link, {
			password: guessable,
			confirmPassword: guessable
		});
		expect(mine.status).toBe(400);
		expect(await signInStatus(user.email, guessable)).toBe(401);

		const set = await new Client().form(link, { password: STRONG, confirmPassword: STRONG });
		expect(set.status).toBe(200);
		expect(await signInStatus(user.email, STRONG)).toBe(200);
	});

	it('an invitation refuses the person’s name and a common password, then accepts a good one', async () => {
		const user = await person('trainer');
		await testDb().update(users).set({ status: 'invited' }).where(eq(users.id, user.id));
		const link = await linkFor(user.id, 'invite');
		const invitee = new Client();

		const name = await invitee.form(link, { password: user.name, confirmPassword: user.name });
		expect(name.status).toBe(400);
		expect(await name.text()).toContain(NAME);

		const common = await invitee.form(link, {
			password: 'iloveyou1234',
			confirmPassword: 'iloveyou1234'
		});
		expect(common.status).toBe(400);
		expect(await common.text()).toMatch(COMMON);
		const [still] = await testDb()
			.select({ status: users.status })
			.from(users)
			.where(eq(users.id, user.id));
		expect(still.status).toBe('invited');

		const accepted = await invitee.form(link, { password: STRONG, confirmPassword: STRONG });
		expect(accepted.status).toBe(303);
		expect(invitee.signedIn).toBe(true);
	});

	it('keeps the demo and test passwords acceptable', async () => {
		// The demo sign-ins and the tests' own accounts choose these; a change of rule that
		// refused them would strand every fixture.
		const user = await person();
		const client = await signedIn(user);
		const r = await client.form('/account?/password', {
			currentPassword: user.password,
			newPassword: 'demo-pass-2026',
			confirmPassword: 'demo-pass-2026'
		});
		expect(r.status).toBe(200);
	});
});
