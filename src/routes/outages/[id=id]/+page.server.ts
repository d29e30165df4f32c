import { error } from '@sveltejs/kit';
import { listInMemory, readListQuery, type ListSpec } from '$lib/domain/listing';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { outageDetail } from '$lib/server/services/outage-reads';
import type { PageServerLoad } from './$types';

// The bookings one outage cancelled: bounded by the outage, so sorted in memory.
const cancelledList = {
	sorts: ['when', 'who', 'email'],
	defaultSort: 'when',
	defaultDir: 'asc',
	filters: { email: ['pending', 'sending', 'sent', 'failed', 'none'] },
	perPage: 50
} as const satisfies ListSpec;

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const found = await attempt(() => outageDetail(idParam(event.params.id, 'The outage')));
	if (!found.ok) error(404, { message: 'That outage was not found.', code: 'not_found' });
	const { cancelled, ...outage } = found.value;
	const list = listInMemory(cancelled, readListQuery(event.url.searchParams, cancelledList), {
		sortBy: { when: (b) => b.startAt, who: (b) => b.userName, email: (b) => b.delivery },
		text: (b) => `${b.userName} ${b.email}`,
		filter: { email: (b, value) => (b.delivery ?? 'none') === value }
	});
	return {
		...outage,
		cancelled: list.rows,
		cancelledView: list.view,
		cancelledTotal: cancelled.length,
		anyFailed: cancelled.some((b) => b.delivery === 'failed')
	};
};
