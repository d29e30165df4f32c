// The pieces of `npm run cluster` on one machine and their ports, read by
// scripts/lib/cluster.mjs. cluster/haproxy.cfg and cluster/galera.cnf have the same ports
// written in: change them together.

/**
 * @typedef {{
 *   name: string,
 *   port: number,
 *   galeraPort: number,
 *   sstPort: number,
 *   istPort: number,
 *   checkPort: number
 * }} GaleraNode
 */

/**
 * Three Galera nodes on loopback. `port` takes SQL; `galeraPort` is group communication
 * (gmcast.listen_addr); `sstPort` receives a full state transfer (rsync), `istPort` an
 * incremental one; `checkPort` is the node's health check (cluster/galera-check.mjs) that
 * HAProxy asks.
 * @type {readonly GaleraNode[]}
 */
export const nodes = Object.freeze([
	{ name: 'node1', port: 3331, galeraPort: 4571, sstPort: 4581, istPort: 4591, checkPort: 9201 },
	{ name: 'node2', port: 3332, galeraPort: 4572, sstPort: 4582, istPort: 4592, checkPort: 9202 },
	{ name: 'node3', port: 3333, galeraPort: 4573, sstPort: 4583, istPort: 4593, checkPort: 9203 }
]);

export const ports = Object.freeze({
	/** HAProxy, SQL: one writer (node1), node2 and node3 as backups. Every app process's default. */
	db: 3330,
	/** HAProxy, SQL: the same nodes with node2 as the writer (node3, node1 as backups). */
	dbSecondWriter: 3339,
	/** HAProxy, HTTP: the app, balanced over its processes. */
	app: 3140,
	/** The app processes themselves. */
	appProcesses: [3141, 3142],
	/** HAProxy's statistics page. */
	stats: 9200,
	/** The local SMTP sink. */
	mailSink: 2540
});
