import { describe, expect, it } from 'vitest';
import { safeNext } from './next-path';

const origin = 'https://boxes.example.org';

describe('safeNext', () => {
	it('keeps a path on this site with its query', () => {
		expect(safeNext('/boxes/3/here', origin)).toBe('/boxes/3/here');
		expect(safeNext('/manage/approvals?x=1#top', origin)).toBe('/manage/approvals?x=1#top');
	});

	it('sends anything that could leave the site to the dashboard', () => {
		for (const next of [
			null,
			'',
			'boxes/3',
			'//evil.example',
			'/\\evil.example',
			'/\t/evil.example',
			'/\n/evil.example',
			'https://evil.example/boxes/3',
			'javascript:alert(1)'
		])
			expect(safeNext(next, origin), String(next)).toBe('/');
	});
});
