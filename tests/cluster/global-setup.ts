// Starts the cluster for `npm run test:cluster` (scripts/lib/cluster.mjs) on a fresh
// database, with two writers: process 1 through HAProxy's frontend whose writer is node1,
// process 2 through the one whose writer is node2. Both processes therefore write on
// different nodes, which is what makes a lock that is not certified visible. The tests
// reach the processes directly (ports 3141, 3142) to choose which one a request goes to, and
// the balancer (3140) where it does not matter.
import { readFileSync, readdirSync } from 'node:fs';
import type { TestProject } from 'vitest/node';
import { clusterStack, log, prepare } from '../../scripts/lib/cluster.mjs';

export type ClusterInfo = {
	database: string;
	appUrls: string[];
	balancerUrl: string;
	databaseUrl: string;
	mailDir: string;
};

declare module 'vitest' {
	export interface ProvidedContext {
		cluster: ClusterInfo;
	}
}

/**
 * Memory of this process and everything it started (the nodes too), in bytes: the sum of
 * each process's proportional set size (Pss), so pages the three mariadbd share are
 * counted once.
 */
function treeMemory(rootPid: number): number {
	const children = new Map<number, number[]>();
	for (const entry of readdirSync('/proc')) {
		if (!/^\d+$/.test(entry)) continue;
		try {
			const stat = readFileSync(`/proc/${entry}/stat`, 'utf8');
			const ppid = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
			children.set(ppid, [...(children.get(ppid) ?? []), Number(entry)]);
		} catch {
			// gone meanwhile
		}
	}
	let total = 0;
	const stack = [rootPid];
	while (stack.length) {
		const pid = stack.pop()!;
		try {
			const rollup = readFileSync(`/proc/${pid}/smaps_rollup`, 'utf8');
			total += Number(/^Pss:\s+(\d+) kB/m.exec(rollup)?.[1] ?? 0) * 1024;
		} catch {
			// gone meanwhile
		}
		stack.push(...(children.get(pid) ?? []));
	}
	return total;
}

export default async function setup(project: TestProject) {
	prepare();
	const database = 'boxwright_cluster_test';
	const stack = clusterStack({
		database,
		fresh: true,
		writers: 2,
		mailFolder: 'test-mail',
		appOutput: 'log',
		seedEnv: {},
		appEnv: {
			LOG_LEVEL: 'warn',
			// Quick outbox rounds, so the outage's messages leave within the test.
			OUTBOX_POLL_MS: '200',
			OUTBOX_BACKOFF_MS: '200',
			READY_SCHEDULER_LATE_MS: '60000'
		}
	});
	let peak = 0;
	const sampler = setInterval(() => (peak = Math.max(peak, treeMemory(process.pid))), 1000);
	try {
		await stack.start();
	} catch (e) {
		clearInterval(sampler);
		await stack.stop();
		throw e;
	}
	project.provide('cluster', {
		database,
		appUrls: stack.appUrls,
		balancerUrl: stack.appUrl,
		databaseUrl: stack.databaseUrl(),
		mailDir: stack.mailDir()
	});
	return async () => {
		clearInterval(sampler);
		log(`peak memory (Pss) of the test run and the cluster: ${Math.round(peak / 2 ** 20)} MB`);
		await stack.stop();
	};
}
