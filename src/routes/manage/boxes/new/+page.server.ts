import { redirect } from '@sveltejs/kit';
import { runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { createBox } from '$lib/server/services/boxes';
import { listModules } from '$lib/server/services/training';
import { boxFormToInput, boxSchema } from '$lib/validation/boxes';
import type { Actions, PageServerLoad } from './$types';

// The defaults of DESIGN.md for a new box.
const defaults = {
	gas: 'Ar',
	status: 'in_service',
	slotStepMin: 15,
	minLengthMin: 30,
	maxLengthMin: 240,
	horizonDays: 28,
	weeklyQuotaMin: 720,
	purgeMin: 30,
	needsApproval: false,
	requiredLeakClass: 3,
	gloveChangeNeedsProof: false,
	cancelWindowHours: 24,
	noShowGraceMin: 15,
	o2WarnPpm: 1,
	o2AlarmPpm: 10,
	h2oWarnPpm: 1,
	h2oAlarmPpm: 10,
	rateInternal: 0,
	rateExternal: 0
};

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const modules = await listModules();
	return { modules: modules.map((m) => ({ id: m.id, name: m.name })), defaults };
};

export const actions: Actions = {
	default: async (event) => {
		const actor = requireRole(event, 'manager');
		const answer = await runForm(
			event.request,
			boxSchema,
			async (input) => ({ id: await createBox(actor, input) }),
			{ read: boxFormToInput }
		);
		if ('id' in answer) redirect(303, `/boxes/${answer.id}`);
		return answer;
	}
};
