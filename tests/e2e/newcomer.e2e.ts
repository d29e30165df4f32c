import { expect, test } from '@playwright/test';
import { eq } from 'drizzle-orm';
import { trainingModules, moduleTrainers } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeModule, makeUser, testDb } from '../support/db';
import { slot } from '../support/time';
import { open, signIn } from './support';

test.afterAll(closeTestDb);

test('a newcomer asks for training, a trainer certifies them, and their first booking goes through', async ({
	browser
}) => {
	const moduleId = await makeModule('handling');
	const [{ name: moduleName }] = await testDb()
		.select({ name: trainingModules.name })
		.from(trainingModules)
		.where(eq(trainingModules.id, moduleId));
	const boxId = await makeBox({ modules: [moduleId] });
	const trainer = await makeUser('trainer');
	await testDb().insert(moduleTrainers).values({ moduleId, userId: trainer.id });
	const newcomer = await makeUser('member', { label: 'newcomer' });
	const times = slot(3, 10, 60);

	// Before: the booking is refused for the missing module.
	const asNewcomer = await browser.newPage();
	await signIn(asNewcomer, newcomer.email, newcomer.password);
	const refused = await asNewcomer.request.post('/api/bookings', {
		data: { boxId, ...times, purpose: 'First transfer' }
	});
	expect(refused.status()).toBe(422);

	// The newcomer asks for the module on the training page.
	await open(asNewcomer, '/training');
	const card = asNewcomer.locator('section, article, li').filter({
		has: asNewcomer.getByRole('heading', { name: moduleName })
	});
	await card
		.first()
		.getByRole('button', { name: new RegExp(`Request training.*${moduleName}`) })
		.click();
	await expect(card.first().getByText(/You asked/)).toBeVisible();

	// The trainer sees the request and certifies.
	const asTrainer = await browser.newPage();
	await signIn(asTrainer, trainer.email, trainer.password);
	await open(asTrainer, '/manage/training');
	await asTrainer
		.getByRole('button', { name: new RegExp(`Certify .*${moduleName}`) })
		.first()
		.click();
	await expect(
		asTrainer.getByRole('button', { name: new RegExp(`Certify .*${moduleName}`) })
	).toHaveCount(0);

	// The newcomer is told, and the booking now goes through.
	await open(asNewcomer, '/notifications');
	await expect(asNewcomer.getByText(new RegExp(moduleName)).first()).toBeVisible();
	const made = await asNewcomer.request.post('/api/bookings', {
		data: { boxId, ...times, purpose: 'First transfer' }
	});
	expect(made.status()).toBe(201);
});
