// How the calculators write their answers.
import { sci } from '$lib/format';

/** ppm to three significant figures, whole numbers from a thousand up. */
export const ppm = (v: number) =>
	Math.abs(v) >= 1000 ? Math.round(v).toLocaleString('en-GB') : sci(v);

/** Seconds under two minutes, minutes above, to three significant figures. */
export const seconds = (s: number) =>
	s < 120 ? `${Number(s.toPrecision(3))} s` : `${Number((s / 60).toPrecision(3))} min`;
