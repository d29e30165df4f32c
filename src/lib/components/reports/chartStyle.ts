// How the report charts tell their series apart: a colour and a fill pattern each, so a
// series still reads in greyscale print or without colour vision. The legend draws the
// same patterns in SVG.
import { themeColour, type ThemeColour } from '$lib/theme';

export type Pattern = 'solid' | 'hatch' | 'dots' | 'cross' | 'vertical' | 'horizontal';

export type SeriesStyle = { colour: string; pattern: Pattern };

const patterns: Pattern[] = ['solid', 'hatch', 'dots', 'cross', 'vertical', 'horizontal'];

// From the palette in src/app.css, read when a chart is drawn.
const colours: ThemeColour[] = ['ink-800', 'argon-600', 'nitrogen-600', 'watch-600', 'ink-400'];

/** The n-th series' style: patterns cycle first, then colours, so neighbours differ in both. */
export function seriesStyle(i: number, colour?: string): SeriesStyle {
	return {
		colour: colour ?? themeColour(colours[i % colours.length]),
		pattern: patterns[i % patterns.length]
	};
}

/**
 * The axes in the palette and the page's font instead of uPlot's black on system-ui: labels
 * in ink-600, grid lines and ticks in the light inks, so the bars carry the colour.
 */
export function axisStyle() {
	const font = '12px "Nunito Sans", ui-sans-serif, system-ui, sans-serif';
	return {
		stroke: themeColour('ink-600'),
		font,
		labelFont: `600 ${font}`,
		grid: { stroke: themeColour('ink-100'), width: 1 },
		ticks: { stroke: themeColour('ink-200'), width: 1, size: 4 },
		border: { show: true, stroke: themeColour('ink-300'), width: 1 }
	};
}

/** The gas accent of a box: argon lavender-violet, nitrogen sea-teal. */
export const gasColour = (gas: 'Ar' | 'N2') =>
	themeColour(gas === 'Ar' ? 'argon-600' : 'nitrogen-600');

/** Strokes of one 8×8 tile of the pattern, as SVG path data (also drawn on the canvas). */
export function tilePath(pattern: Pattern): string {
	switch (pattern) {
		case 'hatch':
			return 'M0 8 L8 0 M-2 2 L2 -2 M6 10 L10 6';
		case 'cross':
			return 'M0 8 L8 0 M-2 2 L2 -2 M6 10 L10 6 M0 0 L8 8 M-2 6 L2 10 M6 -2 L10 2';
		case 'vertical':
			return 'M4 0 L4 8';
		case 'horizontal':
			return 'M0 4 L8 4';
		default:
			return '';
	}
}

/** A canvas fill for uPlot: the colour itself, or a tinted tile with the pattern on it. */
export function canvasFill(style: SeriesStyle): string | CanvasPattern {
	if (style.pattern === 'solid') return style.colour;
	const tile = document.createElement('canvas');
	tile.width = tile.height = 8;
	const g = tile.getContext('2d');
	if (!g) return style.colour;
	// A fifth of the colour for the tile's ground, whatever form the colour is written in.
	g.fillStyle = style.colour;
	g.globalAlpha = 0.2;
	g.fillRect(0, 0, 8, 8);
	g.globalAlpha = 1;
	g.strokeStyle = style.colour;
	g.fillStyle = style.colour;
	g.lineWidth = 1.5;
	if (style.pattern === 'dots') {
		g.beginPath();
		g.arc(4, 4, 1.7, 0, 2 * Math.PI);
		g.fill();
	} else {
		g.stroke(new Path2D(tilePath(style.pattern)));
	}
	return g.createPattern(tile, 'repeat') ?? style.colour;
}
