// Numbers as people read them on the calculation and leak test pages.

/** A typographic minus in place of a hyphen. */
export const minus = (s: string) => s.replace(/^-/, '−');

const superscript: Record<string, string> = {
	'-': '⁻',
	'0': '⁰',
	'1': '¹',
	'2': '²',
	'3': '³',
	'4': '⁴',
	'5': '⁵',
	'6': '⁶',
	'7': '⁷',
	'8': '⁸',
	'9': '⁹'
};

/** Three significant figures, as a power of ten when very small or large: 5.00 × 10⁻⁴. */
export function sci(v: number): string {
	if (v === 0) return '0';
	const [mantissa, exponent] = v.toExponential(2).split('e');
	const e = Number(exponent);
	if (e >= -2 && e < 4) return minus(String(Number(v.toPrecision(3))));
	return `${minus(mantissa)} × 10${[...String(e)].map((c) => superscript[c]).join('')}`;
}
