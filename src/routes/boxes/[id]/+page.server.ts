import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { boxOutages, getBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box, summary } = found.value;
	return {
		box: summary,
		rules: {
			slotStepMin: box.slotStepMin,
			minLengthMin: box.minLengthMin,
			maxLengthMin: box.maxLengthMin,
			horizonDays: box.horizonDays,
			weeklyQuotaMin: box.weeklyQuotaMin,
			purgeMin: box.purgeMin,
			needsApproval: box.needsApproval,
			excludedClasses: box.excludedClasses
		},
		thresholds: {
			o2WarnPpm: box.o2WarnPpm,
			o2AlarmPpm: box.o2AlarmPpm,
			h2oWarnPpm: box.h2oWarnPpm,
			h2oAlarmPpm: box.h2oAlarmPpm
		},
		rates: { internal: box.rateInternal, external: box.rateExternal },
		volumeL: box.volumeL,
		description: box.description,
		outages: await boxOutages(id)
	};
};
