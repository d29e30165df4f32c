import { hash, verify } from '@node-rs/argon2';
import { randomBytes } from 'node:crypto';

// argon2id (the library's default algorithm) at OWASP's minimum for argon2id:
// 19 MiB, 2 iterations, 1 lane.
const options = { memoryCost: 19456, timeCost: 2, parallelism: 1, outputLen: 32 };

export function hashPassword(password: string): Promise<string> {
	return hash(password, options);
}

export async function verifyPassword(hashed: string, password: string): Promise<boolean> {
	try {
		return await verify(hashed, password);
	} catch {
		return false;
	}
}

let decoy: Promise<string> | undefined;
/** Verifies against a throwaway hash, so an unknown e-mail takes as long as a wrong password. */
export async function verifyDecoy(password: string): Promise<false> {
	decoy ??= hashPassword(randomBytes(16).toString('hex'));
	await verifyPassword(await decoy, password);
	return false;
}
