import { describe, expect, it } from 'vitest';
import { effectiveHand, handWarning, isCatastrophic } from './gloves';
import { handForPosition } from './boxes';

describe('gloves', () => {
	it('treats a hole of 10 mm or more as catastrophic (common practice: about 1–2 cm)', () => {
		expect(isCatastrophic(9.9)).toBe(false);
		expect(isCatastrophic(10)).toBe(true);
		expect(isCatastrophic(25)).toBe(true);
	});

	it('turning a glove inside out changes its hand (common practice)', () => {
		expect(effectiveHand('left', true)).toBe('right');
		expect(effectiveHand('right', false)).toBe('right');
		expect(effectiveHand('ambidextrous', true)).toBe('ambidextrous');
	});

	it('warns when the glove’s hand does not suit the port’s side', () => {
		expect(handWarning(handForPosition('front-left'), 'right', false)).toMatch(/on the left/);
		expect(handWarning(handForPosition('front-left'), 'right', true)).toBeNull();
		expect(handWarning(handForPosition('front-centre'), 'right', false)).toBeNull();
	});
});
