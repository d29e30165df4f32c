// The `.env` reader of the scripts, on its own so a test can import it. Node built-ins only.
import { existsSync, readFileSync } from 'node:fs';
import { parseEnv } from 'node:util';

/**
 * Reads an env file when present, with Node's own parser (`util.parseEnv`: quotes, a `#`
 * comment after a value, `export ` before a name, quoted values over several lines);
 * variables already set win.
 * @param {string} file
 * @param {Record<string, string | undefined>} [env]
 */
export function readEnvFile(file, env = process.env) {
	if (!existsSync(file)) return;
	for (const [name, value] of Object.entries(parseEnv(readFileSync(file, 'utf8')))) {
		if (env[name] === undefined) env[name] = value;
	}
}
