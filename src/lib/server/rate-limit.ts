import { createHash } from 'node:crypto';
import { RateLimiterMySQL, RateLimiterRes } from 'rate-limiter-flexible';
import { building } from '$app/environment';
import { config } from './config';
import { pool } from './db';

// Counters live in MariaDB (table rate_limits, created by the migrations), so every app
// process behind a load balancer sees the same counts.
function limiter(keyPrefix: string, points: number, duration: number) {
	if (building) return null as unknown as RateLimiterMySQL;
	return new RateLimiterMySQL({
		storeClient: pool.pool,
		storeType: 'pool',
		dbName: new URL(config.databaseUrl()).pathname.slice(1),
		tableName: 'rate_limits',
		tableCreated: true,
		keyPrefix,
		points,
		duration
	});
}

const perAccount = limiter(
	'signin_account',
	config.signInLimitPerAccount,
	config.signInWindowSeconds
);
const perAddress = limiter(
	'signin_address',
	config.signInLimitPerAddress,
	config.signInWindowSeconds
);

/** Seconds to wait before another sign-in attempt, or 0 when one is allowed now. */
export async function signInRetryAfter(email: string, address: string): Promise<number> {
	const [account, addr] = await Promise.all([
		perAccount.get(`${email.toLowerCase()}|${address}`),
		perAddress.get(address)
	]);
	const blocked = [account, addr].filter(
		(r): r is RateLimiterRes =>
			r !== null && r.consumedPoints >= (r === account ? perAccount : perAddress).points
	);
	if (!blocked.length) return 0;
	return Math.ceil(Math.max(...blocked.map((r) => r.msBeforeNext)) / 1000);
}

export async function recordFailedSignIn(email: string, address: string) {
	// consume() rejects once the points are used up; that is the throttle itself.
	await Promise.allSettled([
		perAccount.consume(`${email.toLowerCase()}|${address}`),
		perAddress.consume(address)
	]);
}

export async function clearFailedSignIns(email: string, address: string) {
	await perAccount.delete(`${email.toLowerCase()}|${address}`);
}

// Feeds: calendar clients poll every few minutes; these limits only stop abuse.
const feedPerToken = limiter('feed_token', config.feedLimitPerToken, 60);
const feedPerAddress = limiter('feed_address', config.feedLimitPerAddress, 60);

/** Seconds to wait before the next feed request, or 0. The token is keyed by its hash. */
export async function feedRetryAfter(token: string, address: string): Promise<number> {
	const key = createHash('sha256').update(token).digest('hex').slice(0, 32);
	try {
		await Promise.all([feedPerToken.consume(key), feedPerAddress.consume(address)]);
		return 0;
	} catch (e) {
		if (e instanceof RateLimiterRes) return Math.max(1, Math.ceil(e.msBeforeNext / 1000));
		throw e;
	}
}
