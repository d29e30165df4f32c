import { endOtherSessions } from '$lib/server/auth';
import { requireUser } from '$lib/server/guard';
import {
	changePassword,
	emailPreferences,
	profile,
	setEmailPreferences
} from '$lib/server/services/accounts';
import { listBoxes } from '$lib/server/services/boxes';
import { listGroupNames, requestMembership } from '$lib/server/services/groups';
import { feedTokenCreatedAt, feedUrls, newFeedToken } from '$lib/server/services/feeds';
import { changePasswordSchema, emailPreferencesSchema, joinSchema } from '$lib/validation/account';
import { runForm } from '$lib/server/forms';
import { setRetryAfter } from '$lib/server/rate-limit';
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
		return runForm(
			event.request,
			joinSchema,
			async ({ groupId }) => {
				await requestMembership(user, groupId);
				return { joined: true };
			},
			{ form: 'join' }
		);
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
		return runForm(
			event.request,
			emailPreferencesSchema,
			async (prefs) => {
				await setEmailPreferences(user.id, prefs);
				return { prefsSaved: true };
			},
			{ form: 'prefs', booleans: ['confirmations'] }
		);
	},
	password: async (event) => {
		const user = requireUser(event);
		const answer = await runForm(
			event.request,
			changePasswordSchema,
			async ({ currentPassword, newPassword }) => {
				await changePassword(user.id, currentPassword, newPassword, event.getClientAddress());
				// The session in hand stays; every other one (other browsers, a lost laptop) ends.
				await endOtherSessions(user.id, event.locals.session!.id);
				return { changed: true };
			},
			{ form: 'password' }
		);
		setRetryAfter(event.setHeaders, answer);
		return answer;
	}
};
