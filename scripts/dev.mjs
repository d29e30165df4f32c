// `npm run dev`: the set-up of `npm start`, then Vite's dev server with hot reload.
import { spawn } from 'node:child_process';
import {
	ensureDatabase,
	ensureDependencies,
	loadEnvFile,
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
const sink = await startMailSink(Number(process.env.SMTP_PORT ?? 2525));

// Started directly, not through npx, so stopping it stops vite too.
const vite = spawn('node', ['node_modules/.bin/vite', 'dev', ...process.argv.slice(2)], {
	cwd: root,
	stdio: 'inherit',
	env: { ...process.env, ...sink.env, DATABASE_URL: db.url }
});
const stop = async () => {
	vite.kill('SIGTERM');
	await sink.stop();
	await db.stop();
	process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
