import { hash, verify } from '@node-rs/argon2';

// argon2id with the library's defaults (memory 19 MiB, 2 passes: the OWASP password storage
// cheat sheet's minimum recommendation for argon2id, from memory).
export async function hashPassword(password: string): Promise<string> {
	return hash(password);
}

export async function verifyPassword(stored: string | null | undefined, password: string): Promise<boolean> {
	if (!stored) return false;
	try {
		return await verify(stored, password);
	} catch {
		return false;
	}
}

// A hash to verify against when the address is unknown, so that both paths take the same time.
let dummy: Promise<string> | undefined;
export function dummyHash(): Promise<string> {
	dummy ??= hash('not-a-real-password-' + Math.random());
	return dummy;
}
