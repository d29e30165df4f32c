import { statementCsv } from '$lib/domain/usage';
import { serve } from '$lib/server/api';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { statementFor } from '$lib/server/services/statements';
import type { RequestHandler } from './$types';

/** GET /api/groups/:id/statements/:month.csv — the month's lines and a total (DESIGN.md). */
export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const groupId = idParam(event.params.id, 'The group');
	const { group, statement, closed } = await serve(() =>
		statementFor(user, groupId, event.params.month)
	);
	const name = `${group.name.replace(/[^A-Za-z0-9]+/g, '-').replace(/^-|-$/g, '')}-${statement.month}.csv`;
	return new Response(statementCsv(statement, group.name), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${name}"`,
			'cache-control': closed ? 'private, max-age=3600' : 'private, no-store',
			'x-statement-status': closed ? 'closed' : 'open'
		}
	});
};
