/** Polls until `check` holds; a deadline, not a sleep, decides when to give up. */
export async function until(check: () => Promise<boolean>, seconds = 20) {
	const deadline = Date.now() + seconds * 1000;
	while (Date.now() < deadline) {
		if (await check()) return;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error('condition not reached in time');
}
