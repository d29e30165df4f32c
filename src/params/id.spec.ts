import { describe, expect, it } from 'vitest';
import { match } from './id';

describe('the id matcher', () => {
	it('takes positive whole numbers that fit an INT column, and nothing else', () => {
		for (const ok of ['1', '42', '2147483647']) expect(match(ok), ok).toBe(true);
		for (const bad of ['0', '-1', '01', '1.5', '1e3', 'abc', '', '2147483648', '99999999999'])
			expect(match(bad), bad).toBe(false);
	});
});
