import { fail, redirect } from '@sveltejs/kit';
import { startSession } from '$lib/server/auth';
import { checkSignIn, signInMessages } from '$lib/server/services/accounts';
import { signInSchema } from '$lib/validation/account';
import { fieldErrors } from '$lib/validation/fields';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths, so the sign-in page cannot be used to bounce people elsewhere. */
function safeNext(next: string | null): string {
	return next && next.startsWith('/') && !next.startsWith('//') ? next : '/';
}

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return { registered: url.searchParams.has('registered') };
};

export const actions: Actions = {
	default: async ({ request, cookies, url, getClientAddress }) => {
		const form = Object.fromEntries(await request.formData());
		const email = typeof form.email === 'string' ? form.email : '';
		const parsed = signInSchema.safeParse(form);
		// Echo the e-mail back, never the password.
		if (!parsed.success) return fail(400, { email, errors: fieldErrors(parsed.error) });

		const result = await checkSignIn(parsed.data.email, parsed.data.password, getClientAddress());
		if (result.kind === 'throttled') {
			return fail(429, { email, message: signInMessages.throttled(result.retryAfterSeconds) });
		}
		if (result.kind !== 'ok') return fail(400, { email, message: signInMessages[result.kind] });

		await startSession(cookies, result.userId);
		redirect(303, safeNext(url.searchParams.get('next')));
	}
};
