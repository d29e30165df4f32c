import { describe, expect, it } from 'vitest';
import { gloveSummary } from './glove-words';

describe('gloveSummary', () => {
	it('counts each state worst first, with the shape the box face draws', () => {
		expect(gloveSummary(['sound', 'damaged', 'sealed', 'sound']).map((x) => x.text)).toEqual([
			'✕ 1 damaged glove',
			'▬ 1 port sealed',
			'● 2 sound'
		]);
		expect(gloveSummary(['due', 'due', 'none']).map((x) => x.text)).toEqual([
			'▲ 2 gloves due',
			'◌ 1 port without a glove recorded'
		]);
		expect(gloveSummary([])).toEqual([]);
	});
});
