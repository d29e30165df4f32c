import { fail } from '@sveltejs/kit';
import { endOtherSessions } from '$lib/server/auth';
import { requireUser } from '$lib/server/guard';
import {
	changePassword,
	emailPreferences,
	profile,
	setEmailPreferences
} from '$lib/server/services/accounts';
import { attempt } from '$lib/server/services/errors';
import { listBoxes } from '$lib/server/services/boxes';
import { listGroupNames, requestMembership } from '$lib/server/services/groups';
import { feedTokenCreatedAt, feedUrls, newFeedToken } from '$lib/server/services/feeds';
import { changePasswordSchema } from '$lib/validation/account';
import { fieldErrors } from '$lib/validation/fields';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [me, prefs, feedSince] = await Promise.all([
		profile(user.id),
		emailPreferences(user.id),
		feedTokenCreatedAt(user.id)
	]);
	const mine = new Set(me.groups.map((g: { id: number }) => g.id));
	const joinable = (await listGroupNames()).filter((g) => !mine.has(g.id));
	return {
		profile: { name: me.name, email: me.email, role: me.role, groups: me.groups, leads: me.leads },
		prefs,
		feedSince,
		joinable
	};
};

export const actions: Actions = {
	join: async (event) => {
		const user = requireUser(event);
		const groupId = formId((await event.request.formData()).get('groupId'));
		const result = await attempt(() => requestMembership(user, groupId));
		if (!result.ok) return fail(result.error.status, { join: result.error.message });
		return { joined: true };
	},
	feed: async (event) => {
		const user = requireUser(event);
		const token = await newFeedToken(user.id);
		const urls = feedUrls(event.url.origin, token);
		const boxes = await listBoxes();
		return {
			feed: {
				...urls,
				boxes: boxes.map((b) => ({
					name: b.name,
					url: `${event.url.origin}/ical/boxes/${b.id}.ics?token=${token}`
				}))
			}
		};
	},
	prefs: async (event) => {
		const user = requireUser(event);
		const form = await event.request.formData();
		await setEmailPreferences(user.id, { confirmations: form.get('confirmations') === 'on' });
		return { prefsSaved: true };
	},
	password: async (event) => {
		const user = requireUser(event);
		const parsed = changePasswordSchema.safeParse(
			Object.fromEntries(await event.request.formData())
		);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error) });

		const result = await attempt(() =>
			changePassword(user.id, parsed.data.currentPassword, parsed.data.newPassword)
		);
		if (!result.ok) {
			const details = result.error.details as { fields?: Record<string, string> } | undefined;
			return fail(result.error.status, {
				errors: details?.fields ?? {},
				message: result.error.message
			});
		}
		// The session in hand stays; every other one (other browsers, a lost laptop) ends.
		await endOtherSessions(user.id, event.locals.session!.id);
		return { changed: true };
	}
};
