import { afterEach, describe, expect, it, vi } from 'vitest';
import { themeColour } from './theme';

afterEach(() => {
	vi.unstubAllGlobals();
});

describe('themeColour', () => {
	it('is a CSS variable where there is no page (server rendering)', () => {
		expect(themeColour('argon-600')).toBe('var(--color-argon-600)');
	});

	it('reads the colour the page’s CSS gives the variable', () => {
		const root = {};
		vi.stubGlobal('document', { documentElement: root });
		vi.stubGlobal('getComputedStyle', (element: unknown) => ({
			getPropertyValue: (name: string) =>
				element === root && name === '--color-nitrogen-600' ? ' #218274' : ''
		}));
		expect(themeColour('nitrogen-600')).toBe('#218274');
		// A variable the CSS lacks stays a var(), still right in CSS and SVG.
		expect(themeColour('watch-900')).toBe('var(--color-watch-900)');
	});
});
