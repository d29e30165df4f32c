// Throttles, with rate-limiter-flexible's MySQL store: counters live in MariaDB (table
// rate_limits, created by the migrations), so every app process behind a load balancer
// sees the same counts, and a `consume` is one atomic upsert there. Every guarded attempt
// takes its point *before* the work it guards (the password check, the argon2 hash, the
// mail), so a burst of parallel requests cannot all pass a check made before any of them
// was counted; a sign-in that turns out right gives its points back.
//
// The store's calls are run again after a deadlock, a Galera certification conflict or a
// node that is not ready (rate-limit-store.ts). When the store still cannot count, a
// guarded attempt (sign-in, registration, reset requests) is refused with a 503 rather
// than let through uncounted, and a feed request goes ahead (its limit only stops abuse).
import { createHash, randomBytes } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { RateLimiterMySQL, RateLimiterRes } from 'rate-limiter-flexible';
import { building } from '$app/environment';
import { config } from './config';
import { pool } from './db';
import { ServiceError } from './errors';
import { logger } from './observability';
import { retryingStore } from './rate-limit-store';

function limiter(keyPrefix: string, points: number, duration: number) {
	if (building) return null as unknown as RateLimiterMySQL;
	const store = new RateLimiterMySQL({
		storeClient: pool.pool,
		storeType: 'pool',
		dbName: new URL(config.databaseUrl()).pathname.slice(1),
		tableName: 'rate_limits',
		tableCreated: true,
		keyPrefix,
		points,
		duration
	});
	return retryingStore(store);
}

const digest = (s: string) => createHash('sha256').update(s).digest('hex');
/** An account's key: its e-mail as sign-in reads it, hashed (no e-mail in the table). */
const accountKey = (email: string) => digest(email.trim().toLowerCase()).slice(0, 40);

type Budget = { limiter: RateLimiterMySQL; key: string };

/** A throttle's answer: go ahead (and how to give the points back), or how long to wait. */
export type Taken =
	{ ok: true; refund(): Promise<void> } | { ok: false; retryAfterSeconds: number };

/** The refusal when the store cannot count: nothing is checked uncounted. */
function storeDown(e: unknown): ServiceError {
	logger.warn({ err: e }, 'the rate limit store failed; the attempt is refused');
	return new ServiceError(
		503,
		'This cannot be checked right now. Please try again in a moment.',
		undefined,
		'unavailable'
	);
}

/**
 * Gives the points back. A store that fails here leaves them counted (the safe side: a
 * budget spent a little sooner), with a warning, rather than fail what was already decided.
 */
const giveBack = async (budgets: Budget[]) => {
	const results = await Promise.allSettled(budgets.map((b) => b.limiter.reward(b.key)));
	for (const r of results)
		if (r.status === 'rejected')
			logger.warn({ err: r.reason }, 'the rate limit store failed to give points back');
};

/**
 * Takes one point from each budget, in order. The first that is spent refuses the attempt;
 * points already taken for it are given back, since nothing was checked.
 */
async function take(budgets: Budget[]): Promise<Taken> {
	const taken: Budget[] = [];
	for (const budget of budgets) {
		try {
			await budget.limiter.consume(budget.key);
			taken.push(budget);
		} catch (e) {
			await giveBack(taken);
			if (!(e instanceof RateLimiterRes)) throw storeDown(e);
			return { ok: false, retryAfterSeconds: Math.max(1, Math.ceil(e.msBeforeNext / 1000)) };
		}
	}
	return { ok: true, refund: () => giveBack(taken) };
}

/** "3 minutes", for the messages that say how long to wait. */
export function waitInWords(seconds: number): string {
	const minutes = Math.max(1, Math.ceil(seconds / 60));
	return `${minutes} minute${minutes === 1 ? '' : 's'}`;
}

/** The refusal of a spent budget: 429 `rate_limited`, the wait in `details`. */
export function tooMany(message: string, retryAfterSeconds: number): ServiceError {
	return new ServiceError(429, message, { retryAfterSeconds }, 'rate_limited');
}

/** Sets Retry-After when a form action's answer is a 429 from `tooMany`. */
export function setRetryAfter(
	setHeaders: (headers: Record<string, string>) => void,
	answer: unknown
): void {
	const failure = answer as {
		status?: number;
		data?: { details?: { retryAfterSeconds?: unknown } };
	} | null;
	const wait = failure?.data?.details?.retryAfterSeconds;
	if (failure?.status === 429 && typeof wait === 'number')
		setHeaders({ 'retry-after': String(wait) });
}

// ---------------------------------------------------------------------------------------
// Sign-in and the current-password check.
//
// Two budgets count wrong passwords, whatever the door (sign-in form, POST /api/session,
// the account page's current password):
// - per account: the e-mail, from every address together, so spreading guesses over many
//   addresses gains nothing (SIGNIN_LIMIT_ACCOUNT);
// - per address, whatever the account, so one address cannot try a few passwords on each
//   of many accounts (SIGNIN_LIMIT_ADDRESS, larger).
// Both are taken before the password is checked and given back when it is right, so they
// only ever hold failures: people signing in correctly never use up an address's budget.
//
// Many people can share one address (a campus NAT, a proxy), and then someone failing on
// purpose there could spend its budget for everyone; and anyone can spend one account's
// budget to lock its owner out. So a browser that has signed in to an account before
// carries a device cookie (OWASP's "device cookies" against lockout): for that account it
// is judged by its own budget of failures alone, not by the address's or the account's.
// Someone behind a busy address, or whose account is under attack, still signs in from a
// browser they used before; a stranger holds no such cookie for the account, and a cookie
// from one account counts for nothing on another.
// ---------------------------------------------------------------------------------------

const signInWindow = config.signInWindowSeconds;
const signInPerAccount = limiter('signin_account', config.signInLimitPerAccount, signInWindow);
const signInPerAddress = limiter('signin_address', config.signInLimitPerAddress, signInWindow);
const signInPerDevice = limiter('signin_device', config.signInLimitPerAccount, signInWindow);

const DEVICE_COOKIE = 'bw_device';
const DEVICE_DAYS = 180;
const knownDevices = limiter('signin_known', 1, DEVICE_DAYS * 86_400);
const looksLikeDeviceToken = (t: string | undefined): t is string =>
	!!t && /^[A-Za-z0-9_-]{43}$/.test(t);
const deviceKey = (token: string, email: string) =>
	digest(`${token}|${email.trim().toLowerCase()}`).slice(0, 40);

/** The browser's device token, when it sent a well-formed one. */
export function deviceToken(cookies: Cookies): string | null {
	const token = cookies.get(DEVICE_COOKIE);
	return looksLikeDeviceToken(token) ? token : null;
}

/** After a right password: this browser is known for this account from now on. */
export async function rememberDevice(cookies: Cookies, email: string): Promise<void> {
	const token = deviceToken(cookies) ?? randomBytes(32).toString('base64url');
	try {
		await knownDevices.set(deviceKey(token, email), 1, DEVICE_DAYS * 86_400);
	} catch (e) {
		// The person is signed in; the browser is only not remembered this time.
		logger.warn({ err: e }, 'the rate limit store failed to remember a device');
		return;
	}
	cookies.set(DEVICE_COOKIE, token, {
		path: '/',
		httpOnly: true,
		sameSite: 'strict',
		secure: config.secureCookies,
		maxAge: DEVICE_DAYS * 86_400
	});
}

/** Takes a sign-in attempt's points before its password is checked. */
export async function takeSignIn(
	email: string,
	address: string,
	device: string | null
): Promise<Taken> {
	if (device) {
		const key = deviceKey(device, email);
		const known = await knownDevices.get(key).catch((e: unknown) => {
			throw storeDown(e);
		});
		if (known) return take([{ limiter: signInPerDevice, key }]);
	}
	return take([
		{ limiter: signInPerAddress, key: address },
		{ limiter: signInPerAccount, key: accountKey(email) }
	]);
}

/** The account page's current-password check: the same budgets as a sign-in. */
export function takePasswordCheck(email: string, address: string): Promise<Taken> {
	return takeSignIn(email, address, null);
}

// ---------------------------------------------------------------------------------------
// Registration and reset requests: every request counts, right or wrong, per address and
// per e-mail (an unknown e-mail exactly like a known one, so a refusal says nothing about
// which have accounts). A registration hashes its password only after this passed.
// ---------------------------------------------------------------------------------------

const registerPerAddress = limiter(
	'register_address',
	config.registerLimitPerAddress,
	config.registerWindowSeconds
);
const registerPerEmail = limiter(
	'register_email',
	config.registerLimitPerEmail,
	config.registerWindowSeconds
);
const resetPerAddress = limiter(
	'reset_address',
	config.resetLimitPerAddress,
	config.resetWindowSeconds
);
const resetPerEmail = limiter('reset_email', config.resetLimitPerEmail, config.resetWindowSeconds);

export function takeRegistration(email: string, address: string): Promise<Taken> {
	return take([
		{ limiter: registerPerAddress, key: address },
		{ limiter: registerPerEmail, key: accountKey(email) }
	]);
}

export function takeResetRequest(email: string, address: string): Promise<Taken> {
	return take([
		{ limiter: resetPerAddress, key: address },
		{ limiter: resetPerEmail, key: accountKey(email) }
	]);
}

// Feeds: calendar clients poll every few minutes; these limits only stop abuse.
const feedPerToken = limiter('feed_token', config.feedLimitPerToken, 60);
const feedPerAddress = limiter('feed_address', config.feedLimitPerAddress, 60);

/**
 * Seconds to wait before the next feed request, or 0. The token is keyed by its hash. A
 * store that cannot count lets the request through (with a warning): a feed is read-only,
 * and its limit only stops abuse.
 */
export async function feedRetryAfter(token: string, address: string): Promise<number> {
	const key = digest(token).slice(0, 32);
	const counts = await Promise.allSettled([
		feedPerToken.consume(key),
		feedPerAddress.consume(address)
	]);
	let wait = 0;
	for (const c of counts) {
		if (c.status === 'fulfilled') continue;
		if (c.reason instanceof RateLimiterRes)
			wait = Math.max(wait, 1, Math.ceil(c.reason.msBeforeNext / 1000));
		else logger.warn({ err: c.reason }, 'the feed rate limit store failed; the request goes ahead');
	}
	return wait;
}
