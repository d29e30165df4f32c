// One gas of the atmosphere chart drawn with uPlot: its readings (or each bucket's lowest
// and highest as a band), its warn and alarm levels as shaded bands, an axis scaled to the
// data, times on the facility's 24-hour clock. uPlot's own legend is off; the chart
// component writes Boxwright's.
import uPlot from 'uplot';
import { DateTime } from 'luxon';
import type { Thresholds } from '$lib/domain/atmosphere';
import { LOG_FLOOR_PPM, yRange, type Levels, type Series } from '$lib/domain/readings-chart';
import { themeColour } from '$lib/theme';

export type Gas = {
	/** "O₂ ppm": the axis's label. */
	label: string;
	hue: 'argon' | 'nitrogen';
	levels: Levels;
	/** Readings, or each bucket's highest. */
	high: number[];
	/** Each bucket's lowest; the readings themselves when not bucketed. */
	low: number[];
};

export type PlotSettings = {
	/** The range shown, Unix seconds. */
	from: number;
	to: number;
	tz: string;
	log: boolean;
	width: number;
	height: number;
	/** Plots with the same key share the cursor. */
	syncKey: string;
	/** The index under the cursor, null when it leaves. */
	onCursor: (idx: number | null) => void;
};

const FONT = '12px "Nunito Sans", "DejaVu Sans", sans-serif';

/** Tick labels on the facility's clock: 24-hour times under a day's steps, dates above. */
function timeTicks(tz: string) {
	return (_u: uPlot, splits: number[], _axis: number, _space: number, step: number) =>
		splits.map((t) => {
			const at = DateTime.fromSeconds(t, { zone: tz });
			if (step < 86_400) return at.toFormat('HH:mm\nd LLL');
			if (step < 28 * 86_400) return at.toFormat('d LLL');
			return at.toFormat('LLL yyyy');
		});
}

/** Lowest and highest of the values drawn. */
function extent(low: number[], high: number[]): { min: number; max: number } | null {
	let min = Infinity;
	let max = -Infinity;
	for (const v of low) if (v < min) min = v;
	for (const v of high) if (v > max) max = v;
	return max >= min ? { min, max } : null;
}

/** Warn→alarm in the watch colour, above alarm in the alarm colour, each edge a line. */
function levelBands(levels: Levels) {
	const watch = { fill: themeColour('watch-100'), line: themeColour('watch-600') };
	const alarm = { fill: themeColour('alarm-100'), line: themeColour('alarm-600') };
	return (u: uPlot) => {
		const { ctx } = u;
		const { left, top, width, height } = u.bbox;
		const y = (v: number) => Math.min(top + height, Math.max(top, u.valToPos(v, 'y', true)));
		const warnY = y(levels.warn);
		const alarmY = y(levels.alarm);
		ctx.save();
		ctx.fillStyle = watch.fill;
		ctx.fillRect(left, alarmY, width, warnY - alarmY);
		ctx.fillStyle = alarm.fill;
		ctx.fillRect(left, top, width, alarmY - top);
		ctx.lineWidth = Math.max(1, uPlot.pxRatio);
		for (const [at, colour] of [
			[levels.warn, watch.line],
			[levels.alarm, alarm.line]
		] as const) {
			const py = u.valToPos(at, 'y', true);
			if (py < top || py > top + height) continue;
			ctx.strokeStyle = colour;
			ctx.setLineDash([6 * uPlot.pxRatio, 4 * uPlot.pxRatio]);
			ctx.beginPath();
			ctx.moveTo(left, py);
			ctx.lineTo(left + width, py);
			ctx.stroke();
		}
		ctx.restore();
	};
}

/** Draws one gas into `host`; returns the plot and the y-range it chose. */
export function drawGas(
	host: HTMLElement,
	gas: Gas,
	s: PlotSettings & { t: number[]; bucketed: boolean }
): { plot: uPlot; range: [number, number] } {
	const range = yRange(extent(gas.low, gas.high), gas.levels, s.log);
	const onLog = (values: number[]) =>
		s.log ? values.map((v) => Math.max(v, LOG_FLOOR_PPM)) : values;
	const line = themeColour(`${gas.hue}-600`);
	const axis = {
		stroke: themeColour('ink-600'),
		font: FONT,
		grid: { stroke: themeColour('ink-100'), width: 1 },
		ticks: { stroke: themeColour('ink-200'), width: 1 }
	};
	const points = { show: !s.bucketed && s.t.length <= 200, size: 5, fill: line };
	const series: uPlot.Series[] = [
		{},
		{ label: gas.label, stroke: line, width: 2, points },
		...(s.bucketed
			? [{ label: `${gas.label} lowest`, stroke: themeColour(`${gas.hue}-500`), width: 1 }]
			: [])
	];
	const data: uPlot.AlignedData = s.bucketed
		? [s.t, onLog(gas.high), onLog(gas.low)]
		: [s.t, onLog(gas.high)];
	const plot = new uPlot(
		{
			width: s.width,
			height: s.height,
			legend: { show: false },
			tzDate: (ts) => uPlot.tzDate(new Date(ts * 1000), s.tz),
			cursor: {
				sync: { key: s.syncKey },
				drag: { x: false, y: false },
				points: { size: 8, width: 2, fill: themeColour('ink-50') }
			},
			scales: {
				x: { time: true, min: s.from, max: s.to },
				y: { distr: s.log ? 3 : 1, log: 10, range: (): uPlot.Range.MinMax => [range[0], range[1]] }
			},
			axes: [
				{ ...axis, values: timeTicks(s.tz), size: 44 },
				{ ...axis, label: gas.label, labelFont: FONT, labelSize: 18, size: 48 }
			],
			series,
			bands: s.bucketed ? [{ series: [1, 2], fill: themeColour(`${gas.hue}-300`) }] : [],
			hooks: {
				drawClear: [levelBands(gas.levels)],
				setCursor: [(u) => s.onCursor(u.cursor.idx ?? null)]
			}
		},
		data,
		host
	);
	return { plot, range };
}

/** Both gases of a series, O₂ into `hosts.o2` and H₂O into `hosts.h2o`, cursors shared. */
export function drawAtmosphere(
	hosts: { o2: HTMLElement; h2o: HTMLElement },
	series: Series,
	thresholds: Thresholds,
	settings: PlotSettings
) {
	const s = { ...settings, t: series.t, bucketed: series.bucketSeconds > 0 };
	const o2 = drawGas(
		hosts.o2,
		{
			label: 'O₂ ppm',
			hue: 'argon',
			levels: { warn: thresholds.o2WarnPpm, alarm: thresholds.o2AlarmPpm },
			high: series.o2,
			low: series.o2Min
		},
		s
	);
	const h2o = drawGas(
		hosts.h2o,
		{
			label: 'H₂O ppm',
			hue: 'nitrogen',
			levels: { warn: thresholds.h2oWarnPpm, alarm: thresholds.h2oAlarmPpm },
			high: series.h2o,
			low: series.h2oMin
		},
		s
	);
	return { plots: [o2.plot, h2o.plot], ranges: { o2: o2.range, h2o: h2o.range } };
}
