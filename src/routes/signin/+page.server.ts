import { redirect } from '@sveltejs/kit';
import { startSession } from '$lib/server/auth';
import { deviceToken, rememberDevice, setRetryAfter, tooMany } from '$lib/server/rate-limit';
import { checkSignIn, signInMessages } from '$lib/server/services/accounts';
import { signInSchema } from '$lib/validation/account';
import { runForm } from '$lib/server/forms';
import { ServiceError } from '$lib/server/services/errors';
import { safeNext } from '$lib/server/next-path';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next'), url.origin));
	return { registered: url.searchParams.has('registered') };
};

export const actions: Actions = {
	default: async ({ request, cookies, url, getClientAddress, setHeaders }) => {
		// The answer echoes the e-mail back, never the password.
		const answer = await runForm(request, signInSchema, async ({ email, password }) => {
			const result = await checkSignIn(email, password, getClientAddress(), deviceToken(cookies));
			if (result.kind === 'throttled') {
				const wait = result.retryAfterSeconds;
				throw tooMany(signInMessages.throttled(wait), wait);
			}
			if (result.kind !== 'ok') throw new ServiceError(400, signInMessages[result.kind]);
			return { userId: result.userId, email };
		});
		if (!('userId' in answer)) {
			setRetryAfter(setHeaders, answer);
			return answer;
		}
		// The session this browser held before ends with the new one (auth.ts).
		await startSession(cookies, answer.userId);
		await rememberDevice(cookies, answer.email);
		redirect(303, safeNext(url.searchParams.get('next'), url.origin));
	}
};
