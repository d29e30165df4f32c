import { requireRole } from '$lib/server/guard';
import {
	AUDIT_PAGE_SIZE,
	auditEntities,
	auditEntries,
	auditPeople,
	type AuditFilter
} from '$lib/server/services/audit';
import { auditFilterSchema } from '$lib/validation/audit';
import { fieldErrors } from '$lib/validation/fields';
import { actionWords, summariseDetails } from './summary';
import type { PageServerLoad } from './$types';

const keys = ['actorId', 'entity', 'entityId', 'from', 'to', 'page'] as const;

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	// Only the filter's own fields, empty ones left out, as a form's would be.
	const values: Record<string, string> = {};
	for (const key of keys) {
		const value = event.url.searchParams.get(key)?.trim();
		if (value) values[key] = value;
	}
	const parsed = auditFilterSchema.safeParse(values);
	const filter: AuditFilter = parsed.success ? parsed.data : { page: 1 };
	const [page, people, entities] = await Promise.all([
		parsed.success ? auditEntries(filter) : { rows: [], hasOlder: false },
		auditPeople(),
		auditEntities()
	]);
	return {
		values,
		errors: parsed.success ? {} : fieldErrors(parsed.error),
		page: filter.page,
		perPage: AUDIT_PAGE_SIZE,
		hasOlder: page.hasOlder,
		entries: page.rows.map((r) => ({
			id: r.id,
			at: r.at,
			actorId: r.actorId,
			actorName: r.actorName,
			action: actionWords(r.action),
			entity: r.entity,
			entityId: r.entityId,
			summary: summariseDetails(r.details),
			details: r.details === null ? null : JSON.stringify(r.details, null, 2)
		})),
		people,
		entities
	};
};
