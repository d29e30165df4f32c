import { describe, expect, it } from 'vitest';
import { actionWords, filterHref, summariseDetails } from './summary';

describe('actionWords', () => {
	it('reads an action as the record and what happened to it', () => {
		expect(actionWords('user.deactivated')).toBe('User: deactivated');
		expect(actionWords('glove_change.step_undone')).toBe('Glove change: step undone');
		expect(actionWords('readings')).toBe('Readings');
	});
});

describe('summariseDetails', () => {
	it('lists each key with its value', () => {
		expect(summariseDetails({ from: 'member', to: 'trainer' })).toBe('from: member · to: trainer');
	});

	it('joins lists of plain values and names nested objects by their keys', () => {
		expect(
			summariseDetails({
				cancelledBookingIds: [4, 9],
				sessionsEnded: 2,
				glove: { size: '8', hand: 'left' },
				steps: [{ key: 'a' }]
			})
		).toBe('cancelled booking ids: 4, 9 · sessions ended: 2 · glove: {size, hand} · steps: 1 item');
	});

	it('says nothing for no details and cuts a long line with an ellipsis', () => {
		expect(summariseDetails(null)).toBe('');
		const long = summariseDetails({ reason: 'x'.repeat(300) }, 40);
		expect(long).toHaveLength(40);
		expect(long.endsWith('…')).toBe(true);
	});

	it('shows an empty list and a missing value in words', () => {
		expect(summariseDetails({ ids: [], groupId: null })).toBe('ids: none · group id: —');
	});
});

describe('filterHref', () => {
	const current = { actorId: '7', entity: 'user', page: '3' };

	it('narrows the filter and starts again at page 1', () => {
		expect(filterHref(current, { entityId: '12' })).toBe('?actorId=7&entity=user&entityId=12');
	});

	it('pages on with the filters kept, and page 1 has no page in its address', () => {
		expect(filterHref(current, { page: 4 })).toBe('?actorId=7&entity=user&page=4');
		expect(filterHref(current, { page: 1 })).toBe('?actorId=7&entity=user');
	});

	it('drops a filter set to nothing', () => {
		expect(filterHref({ actorId: '7' }, { actorId: undefined })).toBe('?');
	});
});
