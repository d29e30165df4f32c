// `npm run cluster`: Boxwright on a three-node Galera cluster on this machine, with HAProxy
// in front of the nodes and of two app processes (scripts/lib/cluster.mjs, cluster/).
// Builds when needed, installs rsync and HAProxy when missing (as root), starts the nodes
// (reusing .data/cluster from an earlier run), creates the database, migrates and seeds
// once through the balancer, starts the mail sink and the two processes (each supervised as
// in `npm start`), and serves on http://localhost:3140. Ctrl-C or SIGTERM stops everything
// it started: the app processes, HAProxy, the nodes in reverse order, the sink.
//
// CLUSTER_WRITERS=2 points the second process at a frontend whose writer is node2, so both
// nodes take writes (what `npm run test:cluster` exercises); the default is one writer.
import { clusterDir, clusterStack, log, ports, prepare } from './lib/cluster.mjs';

const writers = process.env.CLUSTER_WRITERS === '2' ? 2 : 1;
/** @type {Promise<never> | undefined} */
let stopping;
const stack = clusterStack({
	database: process.env.DB_NAME ?? 'boxwright',
	writers,
	supervised: true,
	// HAProxy asks each process's /api/health every second: request lines only when asked for.
	appEnv: { LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn' },
	onGiveUp: (reason) => void stop(1, `${reason}: stopping the cluster`)
});

/**
 * Stops what has been started, then exits with `code`.
 * @param {number} code
 * @param {string} [why]
 */
function stop(code, why) {
	stopping ??= (async () => {
		if (why) log(why);
		await stack.stop();
		process.exit(code);
	})();
	return stopping;
}
process.on(
	'SIGINT',
	() => void stop(0, 'stopping the app processes, HAProxy, the nodes and the sink…')
);
process.on(
	'SIGTERM',
	() => void stop(0, 'stopping the app processes, HAProxy, the nodes and the sink…')
);

prepare();
try {
	await stack.start();
} catch (e) {
	if (!stopping) await stop(1, `the cluster did not start: ${/** @type {Error} */ (e).message}`);
}
if (!stopping) {
	log(
		`serving on http://localhost:${ports.app} (two processes, ${writers === 2 ? 'two writer nodes' : 'one writer node'}); ` +
			`HAProxy's view on http://127.0.0.1:${ports.stats}/; logs in ${clusterDir()}; Ctrl-C stops everything`
	);
}
