import { listInMemory, readListQuery, type ListSpec } from '$lib/domain/listing';
import { parseReportWeeks, reportRange, type GloveFlag } from '$lib/domain/reports';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { facilityReport } from '$lib/server/services/reports';
import type { PageServerLoad } from './$types';

/** Glove wear: every port of the facility, so bounded; sorted and filtered in memory. */
const gloveWearList = {
	prefix: 'gloves',
	sorts: ['box', 'age', 'worn', 'checked', 'sinceCheck', 'state'],
	defaultSort: 'box',
	defaultDir: 'asc',
	filters: { state: ['replace', 'inspect', 'ok'] },
	perPage: 200
} as const satisfies ListSpec;

/** Worst first when sorted up by state. */
const flagRank: Record<GloveFlag, number> = { replace: 0, inspect: 1, ok: 2 };

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const weeks = parseReportWeeks(event.url.searchParams.get('weeks'));
	const now = new Date();
	const report = await facilityReport(reportRange(weeks, now, config.facilityTz), now);
	const boxName = new Map(report.boxes.map((b) => [b.id, b.name]));
	const gloves = listInMemory(report.gloves, readListQuery(event.url.searchParams, gloveWearList), {
		sortBy: {
			box: (p) => boxName.get(p.boxId),
			age: (p) => p.wear?.ageDays,
			worn: (p) => p.wear?.bookedHours,
			checked: (p) => p.wear?.lastInspectionAt,
			sinceCheck: (p) => p.wear?.bookedHoursSinceCheck,
			state: (p) => (p.wear ? flagRank[p.wear.flag] : undefined)
		},
		text: (p) => boxName.get(p.boxId) ?? '',
		filter: { state: (p, flag) => p.wear?.flag === flag }
	});
	return { weeks, report, gloves: gloves.rows, glovesView: gloves.view };
};
