// Throttling of everything that checks or sets a password (sign-in, registration, the
// current-password check, reset requests), the session a new sign-in replaces, and the
// reserved action name. Every test spends the budgets of its own loopback address and its
// own e-mails (tests/support/from-address.ts), never 127.0.0.1's or a demo account's.
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeGroup, makeUser, testDb, uniqueEmail } from '../support/db';
import { AddressClient, uniqueAddress } from '../support/from-address';
import { errorOf } from '../support/http';

afterAll(closeTestDb);

// The test app runs on the defaults unless the environment of `npm test` sets them.
const limit = (name: string, fallback: number) => Number(process.env[name] ?? fallback);
const ACCOUNT_LIMIT = limit('SIGNIN_LIMIT_ACCOUNT', 5);
const ADDRESS_LIMIT = limit('SIGNIN_LIMIT_ADDRESS', 50);
const REGISTER_ADDRESS_LIMIT = limit('REGISTER_LIMIT_ADDRESS', 20);
const REGISTER_EMAIL_LIMIT = limit('REGISTER_LIMIT_EMAIL', 5);
const RESET_ADDRESS_LIMIT = limit('RESET_LIMIT_ADDRESS', 20);
const RESET_EMAIL_LIMIT = limit('RESET_LIMIT_EMAIL', 5);

const WRONG = 'not-the-password-at-all';

function tally(responses: Response[]): Record<number, number> {
	const counts: Record<number, number> = {};
	for (const r of responses) counts[r.status] = (counts[r.status] ?? 0) + 1;
	return counts;
}

/** A 429 in the contract's shape, with a Retry-After the body agrees with. */
async function expectRateLimited(response: Response, message: RegExp) {
	expect(response.status).toBe(429);
	const wait = Number(response.headers.get('retry-after'));
	expect(wait).toBeGreaterThan(0);
	const err = await errorOf(response);
	expect(err.code).toBe('rate_limited');
	expect(err.message).toMatch(message);
	expect(err.details?.retryAfterSeconds).toBe(wait);
}

const signInFrom = (address: string, email: string, password: string) =>
	new AddressClient(address).post('/api/session', { email, password });

describe('sign-in throttling: counted before the password is checked', () => {
	it('100 parallel wrong passwords from one address: no more than the limit are checked, the rest 429', async () => {
		const user = await makeUser('member', { label: 'burst' });
		const address = uniqueAddress();
		const responses = await Promise.all(
			Array.from({ length: 100 }, () => signInFrom(address, user.email, WRONG))
		);
		const counts = tally(responses);
		expect(counts[401] ?? 0).toBeLessThanOrEqual(ACCOUNT_LIMIT);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(100 - ACCOUNT_LIMIT);
		expect((counts[401] ?? 0) + (counts[429] ?? 0)).toBe(100);
		await expectRateLimited(
			responses.find((r) => r.status === 429)!,
			/Too many failed sign-ins/
		);

		// The right password, after the burst: refused, and no session.
		const late = new AddressClient(address);
		const right = await late.post('/api/session', { email: user.email, password: user.password });
		await expectRateLimited(right, /Too many failed sign-ins/);
		expect(late.signedIn).toBe(false);
	});

	it('30 wrong and 1 right in one burst: at most the budget is checked, and the right one is refused once it is spent', async () => {
		const user = await makeUser('member', { label: 'burst-right' });
		const address = uniqueAddress();
		const attempts = Array.from({ length: 31 }, (_, i) => (i === 15 ? user.password : WRONG));
		const responses = await Promise.all(attempts.map((p) => signInFrom(address, user.email, p)));
		const counts = tally(responses);
		// A right password inside the budget may sign in (and gives its point back); never
		// more than the budget of wrong ones is checked, whatever the order they arrived in.
		expect(counts[401] ?? 0).toBeLessThanOrEqual(ACCOUNT_LIMIT);
		expect(counts[200] ?? 0).toBeLessThanOrEqual(1);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(30 - ACCOUNT_LIMIT);

		// Another burst once the budget is spent: the right password is among them, none passes.
		const again = await Promise.all(
			[WRONG, WRONG, user.password, WRONG].map((p) => signInFrom(address, user.email, p))
		);
		expect(again.map((r) => r.status)).toEqual([429, 429, 429, 429]);
		// From another address too: the account's budget is the account's, not the address's.
		const elsewhere = new AddressClient();
		const right = await elsewhere.post('/api/session', {
			email: user.email,
			password: user.password
		});
		await expectRateLimited(right, /Too many failed sign-ins/);
		expect(elsewhere.signedIn).toBe(false);
	});

	it('8 addresses × 5 guesses at one account are held to the account’s budget', async () => {
		const user = await makeUser('member', { label: 'spread' });
		const addresses = Array.from({ length: 8 }, () => uniqueAddress());
		const perAddress = await Promise.all(
			addresses.map(async (address) => {
				const statuses: number[] = [];
				for (let i = 0; i < 5; i++)
					statuses.push((await signInFrom(address, user.email, WRONG)).status);
				return statuses;
			})
		);
		const statuses = perAddress.flat();
		expect(statuses.filter((s) => s === 401).length).toBeLessThanOrEqual(ACCOUNT_LIMIT);
		expect(statuses.filter((s) => s === 429).length).toBeGreaterThanOrEqual(40 - ACCOUNT_LIMIT);
	});

	it('one address trying many accounts is held to the address’s budget', async () => {
		const address = uniqueAddress();
		const tries = ADDRESS_LIMIT + 20;
		const responses = await Promise.all(
			Array.from({ length: tries }, () => signInFrom(address, uniqueEmail('spray'), WRONG))
		);
		const counts = tally(responses);
		expect(counts[401] ?? 0).toBeLessThanOrEqual(ADDRESS_LIMIT);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(20);
	});

	it.skipIf(!!process.env.ADDRESS_HEADER)(
		'believes no X-Forwarded-For unless ADDRESS_HEADER says a proxy sets it',
		async () => {
			const client = new AddressClient();
			const tries = ADDRESS_LIMIT + 10;
			const responses = await Promise.all(
				Array.from({ length: tries }, (_, i) =>
					client.request(
						'POST',
						'/api/session',
						{ email: uniqueEmail('spoof'), password: WRONG },
						{ 'x-forwarded-for': `198.51.100.${i % 250}` }
					)
				)
			);
			expect(tally(responses)[429] ?? 0).toBeGreaterThanOrEqual(10);
		}
	);

	it('right passwords use no budget: many people sign in from one address', async () => {
		const address = uniqueAddress();
		const people = await Promise.all(
			Array.from({ length: ACCOUNT_LIMIT + 3 }, () => makeUser('member', { label: 'nat' }))
		);
		// One after another, each more often than the account's budget and, all together,
		// more often than the address's.
		const rounds = Math.ceil((ADDRESS_LIMIT + 5) / people.length);
		for (let round = 0; round < rounds; round++) {
			for (const person of people) {
				const r = await signInFrom(address, person.email, person.password);
				expect(r.status).toBe(200);
			}
		}
	});

	it('a busy address does not lock out a person whose browser signed in from it before', async () => {
		const proxy = uniqueAddress();
		const person = await makeUser('member', { label: 'behind-proxy' });
		const browser = new AddressClient(proxy);
		await browser.signIn(person.email, person.password);
		expect(browser.cookie('bw_device')).toBeTruthy();

		// Others behind the same address fail until its budget is spent…
		const failures = await Promise.all(
			Array.from({ length: ADDRESS_LIMIT + 10 }, () =>
				signInFrom(proxy, uniqueEmail('other'), WRONG)
			)
		);
		expect(tally(failures)[429] ?? 0).toBeGreaterThanOrEqual(10);
		const stranger = await makeUser('member', { label: 'new-browser' });
		const fresh = await signInFrom(proxy, stranger.email, stranger.password);
		expect(fresh.status).toBe(429);

		// …and the person, from the browser they used before, still signs in.
		const again = await browser.post('/api/session', {
			email: person.email,
			password: person.password
		});
		expect(again.status).toBe(200);
		expect((await browser.get('/api/me')).status).toBe(200);
	});

	it('an account under attack still opens from its owner’s browser; the device cookie has its own budget', async () => {
		const person = await makeUser('member', { label: 'targeted' });
		const owner = new AddressClient();
		await owner.signIn(person.email, person.password);

		// Someone else spends the account's budget from elsewhere.
		await Promise.all(
			Array.from({ length: ACCOUNT_LIMIT + 5 }, () =>
				signInFrom(uniqueAddress(), person.email, WRONG)
			)
		);
		const stranger = await signInFrom(uniqueAddress(), person.email, person.password);
		expect(stranger.status).toBe(429);
		const back = await owner.post('/api/session', {
			email: person.email,
			password: person.password
		});
		expect(back.status).toBe(200);

		// A device cookie is no way around the limit: it counts its own failures.
		const statuses: number[] = [];
		for (let i = 0; i < ACCOUNT_LIMIT + 1; i++)
			statuses.push(
				(await owner.post('/api/session', { email: person.email, password: WRONG })).status
			);
		expect(statuses.slice(0, ACCOUNT_LIMIT).every((s) => s === 401)).toBe(true);
		expect(statuses[ACCOUNT_LIMIT]).toBe(429);

		// And a cookie known for one account is nothing on another.
		const other = await makeUser('member', { label: 'other-account' });
		const borrowed = new AddressClient();
		borrowed.setCookie('bw_device', owner.cookie('bw_device')!);
		const spent = await Promise.all(
			Array.from({ length: ACCOUNT_LIMIT + 3 }, () =>
				borrowed.post('/api/session', { email: other.email, password: WRONG })
			)
		);
		expect(tally(spent)[429] ?? 0).toBeGreaterThanOrEqual(3);
		const right = await borrowed.post('/api/session', {
			email: other.email,
			password: other.password
		});
		expect(right.status).toBe(429);
	});

	it('the sign-in form answers 429 with Retry-After and says how long to wait', async () => {
		const user = await makeUser('member', { label: 'form-throttle' });
		const browser = new AddressClient();
		for (let i = 0; i < ACCOUNT_LIMIT; i++) {
			const r = await browser.form('/signin', { email: user.email, password: WRONG });
			expect(r.status).toBe(400);
		}
		const blocked = await browser.form('/signin', { email: user.email, password: user.password });
		expect(blocked.status).toBe(429);
		expect(Number(blocked.headers.get('retry-after'))).toBeGreaterThan(0);
		expect(await blocked.text()).toMatch(/Too many failed sign-ins\. Try again in \d+ minutes?\./);
		expect(browser.signedIn).toBe(false);
	});
});

describe('a new sign-in ends the session it replaces', () => {
	it('the old session cookie opens nothing once the browser signed in again', async () => {
		const user = await makeUser('member', { label: 'resign' });
		const browser = new AddressClient();
		await browser.signIn(user.email, user.password);
		const first = browser.cookie('bw_session')!;

		await browser.signIn(user.email, user.password);
		const second = browser.cookie('bw_session')!;
		expect(second).not.toBe(first);
		expect((await browser.get('/api/me')).status).toBe(200);

		const copy = new AddressClient(browser.address);
		copy.setCookie('bw_session', first);
		expect((await copy.get('/api/me')).status).toBe(401);
	});

	it('signing in as someone else through the form ends the first person’s session', async () => {
		const [a, b] = await Promise.all([
			makeUser('member', { label: 'first' }),
			makeUser('member', { label: 'second' })
		]);
		const browser = new AddressClient();
		await browser.signIn(a.email, a.password);
		const before = browser.cookie('bw_session')!;

		const signedIn = await browser.form('/signin', { email: b.email, password: b.password });
		expect(signedIn.status).toBe(303);
		expect(((await (await browser.get('/api/me')).json()) as { email: string }).email).toBe(
			b.email
		);
		const copy = new AddressClient();
		copy.setCookie('bw_session', before);
		expect((await copy.get('/api/me')).status).toBe(401);
	});
});

describe('registration, password change and reset requests are throttled', () => {
	it('40 parallel registrations from one address: no more than the limit are accepted', async () => {
		const group = await makeGroup('reg-burst');
		const address = uniqueAddress();
		const emails = Array.from({ length: 40 }, () => uniqueEmail('reg-burst'));
		const responses = await Promise.all(
			emails.map((email, i) =>
				new AddressClient(address).form('/register', {
					name: `Burst Registrant ${i}`,
					email,
					password: `a-long-enough-password-${i}`,
					groupId: group.id
				})
			)
		);
		const counts = tally(responses);
		expect(counts[303] ?? 0).toBeLessThanOrEqual(REGISTER_ADDRESS_LIMIT);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(40 - REGISTER_ADDRESS_LIMIT);
		const refused = responses.find((r) => r.status === 429)!;
		expect(Number(refused.headers.get('retry-after'))).toBeGreaterThan(0);
		expect(await refused.text()).toContain('Too many registration attempts');

		// Only the accepted ones made accounts.
		let made = 0;
		for (const email of emails) {
			const rows = await testDb()
				.select({ id: users.id })
				.from(users)
				.where(eq(users.email, email));
			made += rows.length;
		}
		expect(made).toBe(counts[303] ?? 0);
	});

	it('one e-mail registered again and again from many addresses is held to its own budget', async () => {
		const group = await makeGroup('reg-email');
		const email = uniqueEmail('reg-again');
		const responses = await Promise.all(
			Array.from({ length: REGISTER_EMAIL_LIMIT + 4 }, () =>
				new AddressClient().form('/register', {
					name: 'Same Registrant',
					email,
					password: 'a-long-enough-password',
					groupId: group.id
				})
			)
		);
		const counts = tally(responses);
		expect(counts[303]).toBe(1);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(4);
	});

	it('wrong current passwords on the account page are held to the sign-in budget; the right one then waits too', async () => {
		const user = await makeUser('member', { label: 'pw-throttle' });
		const browser = new AddressClient();
		await browser.signIn(user.email, user.password);
		const [before] = await testDb()
			.select({ hash: users.passwordHash })
			.from(users)
			.where(eq(users.id, user.id));

		const change = (currentPassword: string) =>
			browser.form('/account?/password', {
				currentPassword,
				newPassword: 'a-brand-new-password-2026',
				confirmPassword: 'a-brand-new-password-2026'
			});
		const responses = await Promise.all(Array.from({ length: 12 }, () => change(WRONG)));
		const counts = tally(responses);
		expect(counts[400] ?? 0).toBeLessThanOrEqual(ACCOUNT_LIMIT);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(12 - ACCOUNT_LIMIT);

		const right = await change(user.password);
		expect(right.status).toBe(429);
		expect(Number(right.headers.get('retry-after'))).toBeGreaterThan(0);
		expect(await right.text()).toContain('Too many wrong passwords');
		const [after] = await testDb()
			.select({ hash: users.passwordHash })
			.from(users)
			.where(eq(users.id, user.id));
		expect(after.hash).toBe(before.hash);
	});

	it('reset requests: held per address, and per e-mail alike whether it has an account or not', async () => {
		const address = uniqueAddress();
		const burst = await Promise.all(
			Array.from({ length: RESET_ADDRESS_LIMIT + 10 }, () =>
				new AddressClient(address).form('/reset', { email: uniqueEmail('nobody') })
			)
		);
		const counts = tally(burst);
		expect(counts[200] ?? 0).toBeLessThanOrEqual(RESET_ADDRESS_LIMIT);
		expect(counts[429] ?? 0).toBeGreaterThanOrEqual(10);

		const known = await makeUser('member', { label: 'reset-known' });
		const unknown = uniqueEmail('reset-unknown');
		const ask = async (email: string) => {
			const statuses: number[] = [];
			let message = '';
			for (let i = 0; i < RESET_EMAIL_LIMIT + 2; i++) {
				const r = await new AddressClient().form('/reset', { email });
				statuses.push(r.status);
				if (r.status === 429) message = (await r.text()).match(/Too many[^<.]*/)?.[0] ?? '';
			}
			return { statuses, message };
		};
		const [a, b] = [await ask(known.email), await ask(unknown)];
		expect(a.statuses).toEqual([...Array(RESET_EMAIL_LIMIT).fill(200), ...Array(2).fill(429)]);
		expect(b).toEqual(a);
		expect(a.message).toBe('Too many reset requests');
	});
});

describe('POST /signin?/default', () => {
	it('is the default action, not a server error', async () => {
		const user = await makeUser('member', { label: 'default-action' });
		const browser = new AddressClient();
		const wrong = await browser.form('/signin?/default', { email: user.email, password: WRONG });
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('do not match an account');

		const right = await browser.form('/signin?/default&next=%2Fcalendar', {
			email: user.email,
			password: user.password
		});
		expect(right.status).toBe(303);
		expect(right.headers.get('location')).toBe('/calendar');
		expect(browser.signedIn).toBe(true);
	});

	it('is 404 on a page whose actions are all named', async () => {
		const user = await makeUser('member', { label: 'default-named' });
		const browser = new AddressClient();
		await browser.signIn(user.email, user.password);
		const r = await browser.form('/account?/default', { groupId: 1 });
		expect(r.status).toBe(404);
	});
});
