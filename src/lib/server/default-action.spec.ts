import { describe, expect, it } from 'vitest';
import { withoutDefaultAction } from './default-action';

describe('withoutDefaultAction', () => {
	it('drops a leading ?/default and keeps the rest of the query', () => {
		expect(withoutDefaultAction('http://x.test/signin?/default')).toBe('http://x.test/signin');
		expect(withoutDefaultAction('http://x.test/signin?/default&next=%2Fboxes')).toBe(
			'http://x.test/signin?next=%2Fboxes'
		);
		expect(withoutDefaultAction('http://x.test/signin?next=%2Fa&/default=')).toBe(
			'http://x.test/signin?next=%2Fa'
		);
	});

	it('leaves other action names and plain queries alone', () => {
		expect(withoutDefaultAction('http://x.test/account?/password')).toBeNull();
		expect(withoutDefaultAction('http://x.test/account?/password&/default')).toBeNull();
		expect(withoutDefaultAction('http://x.test/signin?next=%2F')).toBeNull();
		expect(withoutDefaultAction('http://x.test/signin')).toBeNull();
	});
});
