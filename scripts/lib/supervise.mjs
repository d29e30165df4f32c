// Child processes of the scripts: waiting for one to end without missing an exit that has
// already happened, stopping one without signalling it once it is gone, and keeping the
// server of `npm start` running. Node built-ins only.
//
// The restart policy (common practice for process supervisors, from memory, the same
// shape as systemd's Restart= with a doubling pause): a server that exits, with any code
// or by any signal, is started again after 1 s, then 2 s, 4 s … at most 30 s; a run that
// lasted a minute starts the count again. After 5 exits within 2 minutes the supervisor
// gives up, so the caller stops the rest of the stack and exits non-zero instead of
// restarting a server that cannot stay up.

/**
 * @typedef {{
 *   firstDelayMs: number,
 *   maxDelayMs: number,
 *   stableMs: number,
 *   maxExits: number,
 *   windowMs: number
 * }} RestartPolicy
 */

/** @type {Readonly<RestartPolicy>} */
export const restartPolicy = Object.freeze({
	firstDelayMs: 1_000,
	maxDelayMs: 30_000,
	/** A run this long counts as healthy: the next pause is the first one again. */
	stableMs: 60_000,
	maxExits: 5,
	windowMs: 120_000
});

/** @typedef {{ streak: number, exits: number[] }} RestartState */

/** @type {RestartState} */
export const freshRestartState = Object.freeze({ streak: 0, exits: [] });

/**
 * What to do after the server exited at `now`, having run for `uptimeMs` (pure).
 * @param {RestartState} state
 * @param {{ now: number, uptimeMs: number }} exit
 * @param {RestartPolicy} [policy]
 * @returns {{ state: RestartState, giveUp: boolean, delayMs: number }}
 */
export function afterExit(state, { now, uptimeMs }, policy = restartPolicy) {
	const streak = uptimeMs >= policy.stableMs ? 1 : state.streak + 1;
	const exits = [...state.exits.filter((t) => now - t < policy.windowMs), now];
	const next = { streak, exits };
	if (exits.length >= policy.maxExits) return { state: next, giveUp: true, delayMs: 0 };
	const delayMs = Math.min(policy.firstDelayMs * 2 ** (streak - 1), policy.maxDelayMs);
	return { state: next, giveUp: false, delayMs };
}

/**
 * True once the child has ended: with a code, by a signal (`exitCode` stays null then, so
 * checking it alone takes a killed child for a running one), or because it never started.
 * @param {import('node:child_process').ChildProcess} child
 */
export function hasExited(child) {
	return child.exitCode !== null || child.signalCode !== null;
}

/**
 * Resolves true once the child has ended, or false after `ms` (no limit when omitted).
 * A child that has already ended resolves at once: its 'exit' event will not fire again.
 * @param {import('node:child_process').ChildProcess} child
 * @param {number} [ms]
 * @returns {Promise<boolean>}
 */
export function waitForExit(child, ms) {
	if (hasExited(child)) return Promise.resolve(true);
	return new Promise((done) => {
		/** @type {ReturnType<typeof setTimeout> | undefined} */
		let timer;
		/** @param {boolean} ended */
		const finish = (ended) => {
			clearTimeout(timer);
			child.off('exit', onEnd);
			child.off('error', onError);
			done(ended);
		};
		const onEnd = () => finish(true);
		// A child that could not be started emits 'error' and never 'exit'.
		const onError = () => hasExited(child) && finish(true);
		child.on('exit', onEnd);
		child.on('error', onError);
		if (ms !== undefined) timer = setTimeout(() => finish(hasExited(child)), ms);
	});
}

/**
 * Stops a child: SIGTERM, then SIGKILL when it has not ended after `graceMs`. A child that
 * has already ended gets no signal. Resolves true once it has ended.
 * @param {import('node:child_process').ChildProcess} child
 * @param {{ graceMs?: number, name?: string, log?: (message: string) => void }} [options]
 */
export async function stopChild(child, { graceMs = 10_000, name = 'process', log } = {}) {
	if (hasExited(child)) return true;
	child.kill('SIGTERM');
	if (await waitForExit(child, graceMs)) return true;
	log?.(`the ${name} did not stop within ${graceMs / 1000} s; killing it`);
	if (!hasExited(child)) child.kill('SIGKILL');
	return waitForExit(child, 5_000);
}

/**
 * "exited with 1", "was killed by SIGKILL".
 * @param {import('node:child_process').ChildProcess} child
 */
function howItEnded(child) {
	if (child.signalCode) return `was killed by ${child.signalCode}`;
	if (child.pid === undefined) return 'could not be started';
	return `exited with ${child.exitCode}`;
}

/**
 * Keeps a process running: `start()` spawns it; when it ends, by any code or signal, it
 * is started again after the policy's pause, or, once too many exits came too quickly,
 * `onGiveUp()` is called and nothing more is started. `stop()` cancels a pending restart
 * and stops a running process (SIGTERM, then SIGKILL after `graceMs`).
 * @param {{
 *   start: () => import('node:child_process').ChildProcess,
 *   onGiveUp: (reason: string) => void,
 *   log: (message: string) => void,
 *   name?: string,
 *   policy?: RestartPolicy,
 *   graceMs?: number,
 *   now?: () => number
 * }} options
 */
export function supervise({
	start,
	onGiveUp,
	log,
	name = 'server',
	policy = restartPolicy,
	graceMs = 10_000,
	now = Date.now
}) {
	let state = freshRestartState;
	let stopping = false;
	/** @type {import('node:child_process').ChildProcess | null} */
	let child = null;
	/** @type {ReturnType<typeof setTimeout> | undefined} */
	let timer;

	function launch() {
		timer = undefined;
		if (stopping) return;
		const startedAt = now();
		const current = start();
		child = current;
		let handled = false;
		const ended = () => {
			if (handled || !hasExited(current)) return;
			handled = true;
			if (stopping) return;
			const decision = afterExit(state, { now: now(), uptimeMs: now() - startedAt }, policy);
			state = decision.state;
			const why = `the ${name} ${howItEnded(current)}`;
			const n = decision.state.exits.length;
			const count = `${n} exit${n === 1 ? '' : 's'} within ${policy.windowMs / 60_000} min`;
			if (decision.giveUp) {
				log(`${why} (${count}); giving up`);
				onGiveUp(`${why}, ${count}`);
				return;
			}
			log(`${why}; starting it again in ${decision.delayMs / 1000} s (${count})`);
			timer = setTimeout(launch, decision.delayMs);
		};
		current.on('exit', ended);
		current.on('error', (err) => {
			log(`the ${name}: ${err.message}`);
			ended();
		});
	}

	launch();
	return {
		/** The process started last (it may have ended). */
		get child() {
			return child;
		},
		async stop() {
			stopping = true;
			clearTimeout(timer);
			timer = undefined;
			if (child) await stopChild(child, { graceMs, name, log });
		}
	};
}
