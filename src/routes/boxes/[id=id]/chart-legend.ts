// The words of the atmosphere chart's legend (Boxwright's own; uPlot's is off): the point
// under the cursor, or when idle the newest reading shown, always on the facility's 24-hour
// clock and never a placeholder.
import { formatPpm, formatSpread, type Series } from '$lib/domain/readings-chart';
import { formatRange, formatTime, formatWhen, local } from '$lib/domain/time';

export type LegendLine = { when: string; o2: string; h2o: string };

export function legendLine(
	s: Series,
	hover: number | null,
	tz: string,
	now = new Date()
): LegendLine | null {
	if (hover !== null && hover >= 0 && hover < s.t.length) {
		const at = new Date(s.t[hover] * 1000);
		if (!s.bucketSeconds)
			return {
				when: formatWhen(at, tz, now),
				o2: formatPpm(s.o2[hover]),
				h2o: formatPpm(s.h2o[hover])
			};
		return {
			when: formatRange(at, new Date(at.getTime() + s.bucketSeconds * 1000), tz),
			o2: formatSpread(s.o2Min[hover], s.o2[hover]),
			h2o: formatSpread(s.h2oMin[hover], s.h2o[hover])
		};
	}
	if (!s.latest) return null;
	const at = new Date(s.latest.t * 1000);
	const today = local(at, tz).hasSame(local(now, tz), 'day');
	return {
		when: `Latest ${today ? formatTime(at, tz) : formatWhen(at, tz, now)}`,
		o2: formatPpm(s.latest.o2),
		h2o: formatPpm(s.latest.h2o)
	};
}
