// The types of cluster.mjs for the TypeScript that imports it (tests/cluster), so the type
// check stops here instead of following it into setup.mjs, which is plain JavaScript.
import type { ChildProcess } from 'node:child_process';
import type { GaleraNode } from '../../cluster/nodes.mjs';

export { nodes, ports } from '../../cluster/nodes.mjs';
export type { GaleraNode };

export function log(message: string): void;
export function prepare(): void;
export function clusterDir(): string;
export function datadirOf(node: GaleraNode): string;
export function errorLogOf(node: GaleraNode): string;
export function socketOf(node: GaleraNode): string;
export function appPassword(): string;
export function databaseUrl(database: string, port?: number): string;
export function ensureClusterTools(): {
	mariadbd: string;
	installDb: string;
	admin: string;
	client: string;
	haproxy: string;
};
export function nodeSql(node: GaleraNode, statement: string): Promise<string[][]>;
export function nodeStatus(node: GaleraNode): Promise<{
	state: string;
	clusterSize: number;
	primary: boolean;
	ready: boolean;
	lastCommitted: number;
} | null>;
export function nodePid(node: GaleraNode): number | null;
export function grastate(
	node: GaleraNode
): { uuid: string; seqno: number; safeToBootstrap: boolean } | null;
export function initNode(node: GaleraNode): boolean;
export function recoverPosition(node: GaleraNode): Promise<string | null>;
export function startNode(
	node: GaleraNode,
	options?: {
		bootstrap?: boolean;
		position?: string | null;
		clusterSize?: number;
		seconds?: number;
	}
): Promise<void>;
export function waitSynced(
	node: GaleraNode,
	options?: { child?: ChildProcess; clusterSize?: number; seconds?: number }
): Promise<NonNullable<Awaited<ReturnType<typeof nodeStatus>>>>;
export function stopNode(node: GaleraNode): Promise<void>;
export function killNode(node: GaleraNode): Promise<void>;
export function restartNode(node: GaleraNode): Promise<void>;
export function startNodes(): Promise<GaleraNode[]>;
export function ensureClusterDatabase(
	database: string,
	options?: { fresh?: boolean }
): Promise<void>;
export function migrateCluster(url: string): void;
export function seedCluster(url: string, extra: Record<string, string>): void;
export function startChecks(): Promise<ChildProcess>;
export function balancerStatus(): Promise<Map<string, string>>;
export function waitForBalancer(key: string, status: string, seconds?: number): Promise<void>;
export function startHaproxy(): Promise<ChildProcess>;
export function appEnvironment(options: {
	database: string;
	port: number;
	databasePort: number;
	extra?: Record<string, string | undefined>;
}): NodeJS.ProcessEnv;

export type ClusterOptions = {
	database?: string;
	fresh?: boolean;
	writers?: 1 | 2;
	mailFolder?: string;
	appEnv?: Record<string, string>;
	appOutput?: 'inherit' | 'ignore' | 'log';
	supervised?: boolean;
	seedEnv?: Record<string, string>;
	onGiveUp?: (reason: string) => void;
};

export function clusterStack(options?: ClusterOptions): {
	start(): Promise<void>;
	stop(): Promise<void>;
	appUrls: string[];
	appUrl: string;
	databaseUrl(port?: number): string;
	mailDir(): string;
	appDatabasePort(i: number): number;
};
