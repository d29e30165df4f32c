// `npm start`: install, start the private MariaDB, migrate, seed the demo, build, serve.
// The server is supervised (lib/supervise.mjs): when it dies, whatever the exit code or
// signal (kill -9, the OOM killer), it is started again after a pause that doubles from
// 1 s to 30 s; after 5 deaths within 2 minutes the mail sink and the database stop too and
// this script exits with 1. SIGINT or SIGTERM stops the server (SIGKILL after 10 s), the
// sink and the database this script started, then exits.
import { spawn } from 'node:child_process';
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import {
	dataDir,
	ensureBuild,
	ensureDatabase,
	ensureDependencies,
	loadEnvFile,
	log,
	migrate,
	root,
	seed,
	startMailSink
} from './lib/setup.mjs';
import { supervise } from './lib/supervise.mjs';

loadEnvFile();

/** @type {Promise<{ stop(): Promise<void> }> | undefined} */
let dbStarting;
/** @type {Promise<{ stop(): Promise<void> }> | undefined} */
let sinkStarting;
/** @type {ReturnType<typeof supervise> | undefined} */
let server;
/** @type {Promise<never> | undefined} */
let stopping;
const pidFile = join(dataDir(), 'server.pid');

/** Stops, in order, whatever has been started so far, then exits with `code`. */
function stop(code, why) {
	stopping ??= (async () => {
		if (why) log(why);
		await server?.stop();
		rmSync(pidFile, { force: true });
		const [sink, db] = await Promise.all(
			[sinkStarting, dbStarting].map((p) => p?.catch(() => undefined))
		);
		await sink?.stop();
		await db?.stop();
		process.exit(code);
	})();
	return stopping;
}
process.on('SIGINT', () => void stop(0, 'stopping the server, the mail sink and the database…'));
process.on('SIGTERM', () => void stop(0, 'stopping the server, the mail sink and the database…'));
/** After each step of the set-up: once a stop has begun, go no further. */
const unlessStopping = () => stopping ?? Promise.resolve();

ensureDependencies();
dbStarting = ensureDatabase({ database: process.env.DB_NAME ?? 'boxwright' });
const db = await dbStarting;
await unlessStopping();
migrate(db.url);
seed(db.url, { SEED_ONLY_WHEN_EMPTY: '1' });
// SKIP_BUILD=1 serves build/ as it is (a build made elsewhere, or a test that must not
// rebuild under a running app).
if (process.env.SKIP_BUILD !== '1') ensureBuild();
await unlessStopping();
sinkStarting = startMailSink(Number(process.env.SMTP_PORT ?? 2525));
const sink = await sinkStarting.catch((err) => stop(1, `${err.message}; stopping the database`));
await unlessStopping();

const port = process.env.PORT ?? '3000';
const serverEnv = {
	...process.env,
	...sink.env,
	DATABASE_URL: db.url,
	// adapter-node's one cap for every route, above the largest upload (a 25 MB sensor log and
	// its form); each route's own, smaller cap is server/http-guards.ts.
	BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '26M',
	PORT: port,
	ORIGIN: process.env.ORIGIN ?? `http://localhost:${port}`
};
log(`serving on http://localhost:${port} (Ctrl-C stops the server and the database)`);

server = supervise({
	start() {
		const child = spawn('node', ['build'], { cwd: root, stdio: 'inherit', env: serverEnv });
		if (child.pid !== undefined) {
			writeFileSync(pidFile, `${child.pid}\n`);
			log(`server started (pid ${child.pid})`);
		}
		return child;
	},
	onGiveUp: (reason) => void stop(1, `${reason}: stopping the mail sink and the database`),
	log
});
