import { error } from '@sveltejs/kit';
import { readListQuery } from '$lib/domain/listing';
import { hasRole } from '$lib/domain/roles';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import { readingsList, readingsOf } from '$lib/server/services/reading-list';
import { readDayRange } from '$lib/validation/day-range';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box } = found.value;
	const query = readListQuery(event.url.searchParams, readingsList);
	const days = readDayRange(event.url.searchParams, config.facilityTz);
	const list = await readingsOf(id, query, days);
	const isManager = hasRole(user.role, 'manager');
	return {
		box: {
			id,
			name: box.name,
			o2WarnPpm: box.o2WarnPpm,
			o2AlarmPpm: box.o2AlarmPpm,
			h2oWarnPpm: box.h2oWarnPpm,
			h2oAlarmPpm: box.h2oAlarmPpm
		},
		// Notes on readings are for the managers they were sent to.
		readings: list.rows.map((r) => ({ ...r, note: isManager ? r.note : null })),
		view: list.view,
		showNotes: isManager,
		days: { values: days.values, errors: days.errors }
	};
};
