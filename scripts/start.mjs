// `npm start`: install, start the private MariaDB, migrate, seed the demo, build, serve.
import { spawn } from 'node:child_process';
import {
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

loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: process.env.DB_NAME ?? 'boxwright' });
migrate(db.url);
seed(db.url, { SEED_ONLY_WHEN_EMPTY: '1' });
ensureBuild();
const sink = await startMailSink(Number(process.env.SMTP_PORT ?? 2525));

const port = process.env.PORT ?? '3000';
const server = spawn('node', ['build'], {
	cwd: root,
	stdio: 'inherit',
	env: {
		...process.env,
		...sink.env,
		DATABASE_URL: db.url,
		// Uploads are checked at 5 MB with a clear message; the adapter's cap sits above that.
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '26M',
		PORT: port,
		ORIGIN: process.env.ORIGIN ?? `http://localhost:${port}`
	}
});
log(`serving on http://localhost:${port} (Ctrl-C stops the server and the database)`);

let stopping = false;
async function stop(code) {
	if (stopping) return;
	stopping = true;
	if (server.exitCode === null) {
		server.kill('SIGTERM');
		await new Promise((done) => server.once('exit', done));
	}
	await sink.stop();
	await db.stop();
	process.exit(code);
}
process.on('SIGINT', () => stop(0));
process.on('SIGTERM', () => stop(0));
server.on('exit', (code) => stop(code ?? 0));
