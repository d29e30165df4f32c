import { parseReportWeeks, reportRange } from '$lib/domain/reports';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { facilityReport } from '$lib/server/services/reports';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const weeks = parseReportWeeks(event.url.searchParams.get('weeks'));
	const now = new Date();
	return { weeks, report: await facilityReport(reportRange(weeks, now, config.facilityTz), now) };
};
