// The box face's port states in words, for a card: "✕ 1 damaged glove · ▬ 1 port sealed".
// Each state keeps the shape the face draws, so the line never rests on colour alone.
import type { GloveState } from '$lib/domain/gloves';

export const gloveStateMark: Record<GloveState, string> = {
	damaged: '✕',
	sealed: '▬',
	due: '▲',
	none: '◌',
	sound: '●'
};

const words: Record<GloveState, (n: number) => string> = {
	damaged: (n) => `${n} damaged ${n === 1 ? 'glove' : 'gloves'}`,
	sealed: (n) => `${n} ${n === 1 ? 'port' : 'ports'} sealed`,
	due: (n) => `${n} ${n === 1 ? 'glove' : 'gloves'} due`,
	none: (n) => `${n} ${n === 1 ? 'port' : 'ports'} without a glove recorded`,
	sound: (n) => `${n} sound`
};

/** Worst first, as a manager reads a card: what needs doing, then what is fine. */
const order: GloveState[] = ['damaged', 'sealed', 'due', 'none', 'sound'];

/** Each state present with its count, worst first; empty for a box with no ports. */
export function gloveSummary(
	states: GloveState[]
): { state: GloveState; mark: string; words: string; text: string }[] {
	return order
		.map((state) => ({ state, n: states.filter((s) => s === state).length }))
		.filter((x) => x.n > 0)
		.map(({ state, n }) => {
			const mark = gloveStateMark[state];
			return { state, mark, words: words[state](n), text: `${mark} ${words[state](n)}` };
		});
}
