// Reads the local mail sink's folder (development and tests only; MAIL_SINK_DIR is set by
// the scripts that start the sink).
import { readdir, readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { config } from '../config';

export function sinkDir(): string | null {
	return config.mailSinkDir;
}

function header(raw: string, name: string): string {
	const match = new RegExp(`^${name}: (.*(?:\\r?\\n[ \\t].*)*)`, 'im').exec(raw);
	return match ? match[1].replace(/\r?\n[ \t]+/g, ' ') : '';
}

export async function listSink(limit = 200) {
	const dir = sinkDir();
	if (!dir) return null;
	const names = (await readdir(dir).catch(() => [])).filter((n) => n.endsWith('.eml'));
	names.sort().reverse();
	return Promise.all(
		names.slice(0, limit).map(async (name) => {
			const raw = await readFile(join(dir, name), 'utf8');
			return {
				name,
				at: (await stat(join(dir, name))).mtime,
				to: header(raw, 'To'),
				subject: header(raw, 'Subject')
			};
		})
	);
}

/** One message's raw text; only plain file names from the listing are accepted. */
export async function readSink(name: string): Promise<string | null> {
	const dir = sinkDir();
	if (!dir || !/^[\w-]+\.eml$/.test(name)) return null;
	return readFile(join(dir, name), 'utf8').catch(() => null);
}
