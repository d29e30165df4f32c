import { expect, test } from '@playwright/test';
import { DEMO_PASSWORD, open } from './support';

test('a member signs in and sees the dashboard', async ({ page }) => {
	await open(page, '/');
	await expect(page).toHaveURL(/\/signin/);
	await page.getByLabel('E-mail').fill('member@example.org');
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();

	await expect(page.getByRole('heading', { name: 'Good to see you, Lena' })).toBeVisible();
	await expect(page.getByText('Organometallic Synthesis')).toBeVisible();
	const nav = page.getByRole('navigation', { name: 'Main' });
	await expect(nav.getByRole('link', { name: 'Dashboard' })).toHaveAttribute(
		'aria-current',
		'page'
	);
	await expect(nav.getByRole('link', { name: 'Users and roles' })).toHaveCount(0);

	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible();
});

test('a wrong password shows a message and keeps the e-mail', async ({ page }) => {
	await open(page, '/signin');
	await page.getByLabel('E-mail').fill('member@example.org');
	await page.getByLabel('Password').fill('not-the-password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('alert')).toContainText('do not match an account');
	await expect(page.getByLabel('E-mail')).toHaveValue('member@example.org');
	await expect(page.getByLabel('Password')).toHaveValue('');
});

test('a manager approves a pending registration', async ({ page }) => {
	const email = `e2e-${Date.now().toString(36)}@test.example`;
	const name = `Pat Newcomb ${Date.now().toString(36)}`;

	await open(page, '/register');
	await page.getByLabel('Name').fill(name);
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill('long-enough-password');
	await page.getByLabel('Research group').selectOption({ label: 'Photoredox Catalysis' });
	await page.getByRole('button', { name: 'Send registration' }).click();
	await expect(page.getByRole('status')).toContainText('your registration is in');
	await page.locator('body[data-hydrated="true"]').waitFor();

	await page.getByLabel('E-mail').fill('manager@example.org');
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByText(/waiting for you/)).toBeVisible();

	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: /Approvals/ })
		.click();
	const row = page.getByRole('row', { name: new RegExp(name) });
	await expect(row).toContainText('Photoredox Catalysis');
	await row.getByRole('button', { name: `Approve ${name}` }).click();
	await expect(page.getByRole('row', { name: new RegExp(name) })).toHaveCount(0);

	await page.getByRole('button', { name: 'Sign out' }).click();
	await page.waitForURL('**/signin');
	await page.locator('body[data-hydrated="true"]').waitFor();
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill('long-enough-password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('heading', { name: 'Good to see you, Pat' })).toBeVisible();
});
