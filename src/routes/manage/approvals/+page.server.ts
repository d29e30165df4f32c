import { fail } from '@sveltejs/kit';
import { requirePiOrRole } from '$lib/server/guard';
import { approveAccount, declineAccount, pendingAccountsFor } from '$lib/server/services/accounts';
import { attempt } from '$lib/server/services/errors';
import { decisionSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requirePiOrRole(event, 'manager');
	return { pending: await pendingAccountsFor(user) };
};

async function decide(event: RequestEvent, decision: typeof approveAccount) {
	const user = await requirePiOrRole(event, 'manager');
	const parsed = decisionSchema.safeParse(Object.fromEntries(await event.request.formData()));
	if (!parsed.success) return fail(400, { message: 'Choose an account to decide.' });
	const result = await attempt(() => decision(user, parsed.data.userId));
	if (!result.ok) return fail(result.error.status, { message: result.error.message });
	return { decided: parsed.data.userId };
}

export const actions: Actions = {
	approve: (event) => decide(event, approveAccount),
	decline: (event) => decide(event, declineAccount)
};
