// The `.env` reader of the scripts (`npm start`, `npm test`, `npm run dev`). No app or
// database needed; it sits here because vitest collects tests/integration.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readEnvFile } from '../../scripts/lib/env.mjs';

const dir = mkdtempSync(join(tmpdir(), 'boxwright-env-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let files = 0;
function load(text: string, env: Record<string, string | undefined> = {}) {
	const file = join(dir, `${++files}.env`);
	writeFileSync(file, text);
	readEnvFile(file, env);
	return env;
}

describe('readEnvFile', () => {
	it('reads values as a shell would: quotes, comments after a value, export', () => {
		const env = load(
			[
				'# a comment line',
				'A=1',
				'B="two words"',
				"C='single'",
				'C2=x # c',
				'D_URL=mysql://u:p@127.0.0.1:3307/db?x=1',
				'export E=4',
				'F="x # not a comment"',
				''
			].join('\n')
		);
		expect(env).toEqual({
			A: '1',
			B: 'two words',
			C: 'single',
			C2: 'x',
			D_URL: 'mysql://u:p@127.0.0.1:3307/db?x=1',
			E: '4',
			F: 'x # not a comment'
		});
	});

	it('leaves variables that are already set, even to an empty value', () => {
		const env = load('A=from-file\nB=from-file\nC=from-file\n', { A: 'set', B: '' });
		expect(env).toEqual({ A: 'set', B: '', C: 'from-file' });
	});

	it('does nothing when there is no file', () => {
		const env = { A: 'set' };
		readEnvFile(join(dir, 'missing.env'), env);
		expect(env).toEqual({ A: 'set' });
	});
});
