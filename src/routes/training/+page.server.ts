import { requireUser } from '$lib/server/guard';
import { certificationsOf, listModules } from '$lib/server/services/training';
import { documentsForModules, modulesManagedBy } from '$lib/server/services/documents';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [mine, modules] = await Promise.all([certificationsOf(user.id), listModules()]);
	return {
		mine,
		modules: modules.map((m) => ({
			id: m.id,
			description: m.description,
			prerequisites: m.prerequisites.map((p) => p.name),
			trainers: m.trainers.map((t) => t.name)
		})),
		documents: await documentsForModules(modules.map((m) => m.id)),
		managedModules: await modulesManagedBy(user).then((m) => (m === 'all' ? 'all' : [...m]))
	};
};
