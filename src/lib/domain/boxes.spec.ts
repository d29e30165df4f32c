import { describe, expect, it } from 'vitest';
import { portName, portPositions } from './boxes';

describe('portName', () => {
	it('names a port by its side, then its wall', () => {
		expect(portName('front-left')).toBe('left port, front');
		expect(portName('front-centre')).toBe('centre port, front');
		expect(portName('rear-right')).toBe('right port, rear');
		expect(portName('side-left')).toBe('left port, side wall');
	});

	it('gives every known position its own name', () => {
		const names = portPositions.map(portName);
		expect(new Set(names).size).toBe(portPositions.length);
		for (const n of names) expect(n).not.toMatch(/-/);
	});

	it('keeps an unknown position as it is', () => {
		expect(portName('top')).toBe('top port');
		expect(portName('front-up')).toBe('front-up port');
	});
});
