// The health check HAProxy asks about each Galera node (cluster/haproxy.cfg, `check port`).
// One small HTTP server per node: GET answers 200 only when the node is Synced
// (wsrep_local_state = 4), ready (wsrep_ready = ON), not told to refuse queries
// (wsrep_reject_queries = NONE) and actually answers a query; 503 otherwise, with the reason
// as text. A node that is joining, donating, isolated (non-primary) or refusing queries
// therefore gets no new connections from the balancer.
//
//   GALERA_CHECK_USER=boxwright_check GALERA_CHECK_PASSWORD=… \
//     node cluster/galera-check.mjs 9201=127.0.0.1:3331 9202=127.0.0.1:3332 …
//
// Each argument is `httpPort=host:sqlPort`; on several machines each database host runs
// one, `9200=127.0.0.1:3306`. The user needs no privilege (`CREATE USER … ` with USAGE
// only): status and variables are readable by anyone.
import http from 'node:http';
import mysql from 'mysql2/promise';

const user = process.env.GALERA_CHECK_USER ?? 'boxwright_check';
const password = process.env.GALERA_CHECK_PASSWORD ?? '';
const bindAddress = process.env.GALERA_CHECK_BIND ?? '127.0.0.1';
/** A node that takes longer than this to answer is not healthy. */
const timeoutMs = Number(process.env.GALERA_CHECK_TIMEOUT_MS ?? 800);

// One statement: it proves the node takes queries and reads the state in the same round trip.
const STATE = `SELECT @@global.wsrep_reject_queries AS reject_queries,
	(SELECT VARIABLE_VALUE FROM information_schema.GLOBAL_STATUS
		WHERE VARIABLE_NAME = 'WSREP_LOCAL_STATE') AS local_state,
	(SELECT VARIABLE_VALUE FROM information_schema.GLOBAL_STATUS
		WHERE VARIABLE_NAME = 'WSREP_LOCAL_STATE_COMMENT') AS state_comment,
	(SELECT VARIABLE_VALUE FROM information_schema.GLOBAL_STATUS
		WHERE VARIABLE_NAME = 'WSREP_READY') AS ready`;

/**
 * The check of one node: keeps one connection, opened again after any error.
 * @param {string} host
 * @param {number} port
 */
function nodeCheck(host, port) {
	/** @type {Promise<import('mysql2/promise').Connection> | null} */
	let connection = null;

	const drop = () => {
		const old = connection;
		connection = null;
		old?.then((c) => c.destroy()).catch(() => {});
	};

	/** @returns {Promise<{ ok: boolean, why: string }>} */
	async function check() {
		connection ??= mysql.createConnection({
			host,
			port,
			user,
			password,
			connectTimeout: timeoutMs
		});
		try {
			const conn = await connection;
			const [rows] = await conn.query({ sql: STATE, timeout: timeoutMs });
			const row = /** @type {Record<string, string>[]} */ (rows)[0];
			if (row.reject_queries !== 'NONE') {
				return { ok: false, why: `refusing queries (wsrep_reject_queries=${row.reject_queries})` };
			}
			if (row.local_state !== '4') return { ok: false, why: `not synced: ${row.state_comment}` };
			if (row.ready !== 'ON') return { ok: false, why: 'wsrep_ready is OFF' };
			return { ok: true, why: 'synced' };
		} catch (e) {
			drop();
			const err = /** @type {{ code?: string, message?: string }} */ (e);
			return { ok: false, why: `no answer: ${err.code ?? err.message}` };
		}
	}

	// One check at a time per node; requests that arrive meanwhile share its answer.
	/** @type {Promise<{ ok: boolean, why: string }> | null} */
	let running = null;
	return () => (running ??= check().finally(() => (running = null)));
}

const targets = process.argv.slice(2);
if (!targets.length) {
	console.error('[galera-check] usage: galera-check.mjs httpPort=host:sqlPort …');
	process.exit(1);
}

/** @type {http.Server[]} */
const servers = [];
let listening = 0;
for (const target of targets) {
	const match = /^(\d+)=([^:]+):(\d+)$/.exec(target);
	if (!match) {
		console.error(`[galera-check] not httpPort=host:sqlPort: ${target}`);
		process.exit(1);
	}
	const [, httpPort, host, sqlPort] = match;
	const check = nodeCheck(host, Number(sqlPort));
	const server = http.createServer(async (_req, res) => {
		const { ok, why } = await check();
		res.writeHead(ok ? 200 : 503, { 'content-type': 'text/plain', connection: 'close' });
		res.end(`${host}:${sqlPort} ${why}\n`);
	});
	server.on('error', (e) => {
		console.error(`[galera-check] port ${httpPort}: ${e.message}`);
		process.exit(1);
	});
	server.listen(Number(httpPort), bindAddress, () => {
		if (++listening === targets.length) {
			console.log(`[galera-check] listening on ${targets.join(', ')}`);
		}
	});
	servers.push(server);
}

const stop = () => {
	for (const server of servers) server.close();
	process.exit(0);
};
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
