// A box's upkeep log (who did which task, when) as a person pages through it: sorted,
// filtered and searched in SQL with the total, so years of entries are never cut off.
import { and, count, eq } from 'drizzle-orm';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { maintenanceKinds, type MaintenanceKind } from '$lib/domain/upkeep';
import { db } from '../db';
import { maintenanceLog, maintenanceTasks, users } from '../db/schema';
import { matchesWords, orderOf, pageInSql } from '../listing';

export const upkeepLogList = {
	sorts: ['when', 'task'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { kind: maintenanceKinds },
	perPage: 25
} as const satisfies ListSpec;

export type UpkeepLogQuery = ListQuery<(typeof upkeepLogList.sorts)[number], 'kind'>;

/** One page of a box's upkeep log with the total: by date or task, of one kind, by words. */
export async function maintenanceHistory(boxId: number, query: UpkeepLogQuery) {
	const where = and(
		eq(maintenanceTasks.boxId, boxId),
		query.filters.kind
			? eq(maintenanceTasks.kind, query.filters.kind as MaintenanceKind)
			: undefined,
		matchesWords(query.q, [maintenanceTasks.title, maintenanceLog.note])
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db
				.select({ n: count() })
				.from(maintenanceLog)
				.innerJoin(maintenanceTasks, eq(maintenanceTasks.id, maintenanceLog.taskId))
				.where(where);
			return row.n;
		},
		(limit, offset) =>
			db
				.select({
					id: maintenanceLog.id,
					title: maintenanceTasks.title,
					kind: maintenanceTasks.kind,
					doneAt: maintenanceLog.doneAt,
					doneBy: users.name,
					note: maintenanceLog.note,
					outageId: maintenanceLog.outageId
				})
				.from(maintenanceLog)
				.innerJoin(maintenanceTasks, eq(maintenanceTasks.id, maintenanceLog.taskId))
				.leftJoin(users, eq(users.id, maintenanceLog.doneBy))
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{ when: maintenanceLog.doneAt, task: maintenanceTasks.title },
						maintenanceLog.id
					)
				)
				.limit(limit)
				.offset(offset)
	);
}
