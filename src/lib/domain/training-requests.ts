// From newcomer to first booking: which modules stand between a person and each box, when
// they may ask for training, when an expiring certification is reminded, and which
// prerequisites a module may name without going round in a circle.
import type { CertificationState } from './certifications';

const DAY_MS = 86_400_000;

/** Reminders before a certification expires, in days ahead, the earliest first. */
export const REMINDER_DAYS = [30, 7] as const;
export type ReminderStage = (typeof REMINDER_DAYS)[number];

/**
 * The reminder due for a certification expiring at `expiresAt`: the nearest stage whose
 * window it has entered (7 inside a week, else 30 inside 30 days), none before that or once
 * it has expired. A run that first sees it five days ahead sends only the week's reminder.
 */
export function reminderStage(expiresAt: Date, now: Date): ReminderStage | null {
	const left = expiresAt.getTime() - now.getTime();
	if (left <= 0) return null;
	const stage = [...REMINDER_DAYS].reverse().find((days) => left <= days * DAY_MS);
	return stage ?? null;
}

/** A certification counts for booking while it is current or expiring. */
export function isLive(state: CertificationState): boolean {
	return state === 'current' || state === 'expiring';
}

export type RequestRefusal = 'open' | 'held';

/**
 * Why a person may not ask for training in a module now: a request of theirs is open, or
 * they hold it and it is not yet near its expiry (inside the warning window, asking for a
 * renewal is what the reminders suggest).
 */
export function requestRefusal(state: CertificationState, hasOpen: boolean): RequestRefusal | null {
	if (hasOpen) return 'open';
	if (state === 'current') return 'held';
	return null;
}

type Module = { id: number; name: string };

export type BoxPath = { id: number; name: string; missing: Module[] };

/**
 * Per box, the required modules the person does not hold live; `canBookAny` when some box
 * needs nothing more. With no boxes at all there is nothing to book and nothing to ask for.
 */
export function bookingPath(
	boxes: { id: number; name: string; requiredModules: Module[] }[],
	held: ReadonlySet<number>
): { canBookAny: boolean; boxes: BoxPath[] } {
	const paths = boxes.map((b) => ({
		id: b.id,
		name: b.name,
		missing: b.requiredModules.filter((m) => !held.has(m.id))
	}));
	return { canBookAny: !paths.length || paths.some((p) => !p.missing.length), boxes: paths };
}

/**
 * True when `moduleId` requiring `prerequisiteIds` would close a circle: some prerequisite
 * already requires `moduleId`, directly or through others (or is the module itself).
 * `edges` are the existing (moduleId → requiresModuleId) pairs; the module's own are ignored.
 */
export function closesCircle(
	moduleId: number,
	prerequisiteIds: readonly number[],
	edges: readonly { moduleId: number; requiresModuleId: number }[]
): boolean {
	const requires = new Map<number, number[]>();
	for (const e of edges) {
		if (e.moduleId === moduleId) continue;
		requires.set(e.moduleId, [...(requires.get(e.moduleId) ?? []), e.requiresModuleId]);
	}
	const seen = new Set<number>();
	const stack = [...prerequisiteIds];
	while (stack.length) {
		const id = stack.pop()!;
		if (id === moduleId) return true;
		if (seen.has(id)) continue;
		seen.add(id);
		stack.push(...(requires.get(id) ?? []));
	}
	return false;
}
