// Boxwright's palette is defined once, in src/app.css (`@theme`), where every colour is a
// CSS variable. Styles and SVG take `var(--color-…)`; a canvas (uPlot) needs the colour
// itself, read here from the page's CSS at the time of drawing.

type Hue = 'ink' | 'argon' | 'nitrogen' | 'watch' | 'alarm';
export type ThemeColour = `${Hue}-${50 | 100 | 200 | 300 | 400 | 500 | 600 | 700 | 800 | 900}`;

/**
 * A palette colour as the page's CSS gives it (e.g. `#7657bd`). Where there is no page
 * (server rendering) or the variable is missing, `var(--color-…)`: right in CSS and SVG.
 */
export function themeColour(name: ThemeColour): string {
	const variable = `--color-${name}`;
	if (typeof document === 'undefined') return `var(${variable})`;
	const value = getComputedStyle(document.documentElement).getPropertyValue(variable).trim();
	return value || `var(${variable})`;
}
