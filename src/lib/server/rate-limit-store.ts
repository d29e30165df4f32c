// The rate limiters' MySQL store on a cluster. rate-limiter-flexible's RateLimiterMySQL sends
// each count as BEGIN, an upsert, a read and COMMIT, and gives up on the first error: on a
// Galera cluster two nodes counting one key at once meet at certification and one is
// refused (1213), and a node that is joining refuses everything (1047). Here its store calls
// are run again, a few times, with the transactions' back-off (db/retry.ts); what still
// fails is for rate-limit.ts to answer (feeds go ahead, sign-in is refused with a 503).
//
// No in-memory "insurance" limiter: it would count per process, so a sign-in guess could
// pass on a count that is not the shared one.
import type { RateLimiterMySQL } from 'rate-limiter-flexible';
import { retrying, type RetryOptions } from './db/retry';

/** Attempts of one store call, the first included: a count is a few milliseconds. */
export const STORE_ATTEMPTS = 6;

const storeCalls = ['_upsert', '_get', '_delete'] as const;
type StoreCall = (...args: unknown[]) => Promise<unknown>;

/**
 * Makes `limiter`'s store calls run again while they fail with a refusal (deadlock,
 * certification, node not ready) or a lost connection. An upsert whose COMMIT was refused
 * wrote nothing, so it is counted once; one whose connection was lost during COMMIT may be
 * counted twice, which errs on the side of refusing sooner.
 */
export function retryingStore<L extends RateLimiterMySQL>(
	limiter: L,
	options: RetryOptions = {}
): L {
	const internal = limiter as unknown as Record<(typeof storeCalls)[number], StoreCall>;
	for (const name of storeCalls) {
		const call = internal[name].bind(limiter);
		internal[name] = (...args) =>
			retrying(() => call(...args), { attempts: STORE_ATTEMPTS, ...options });
	}
	return limiter;
}
