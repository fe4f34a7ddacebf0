import { createHash, randomBytes } from 'node:crypto';

/** A random URL-safe token and the SHA-256 hash under which it is stored. */
export function newToken(bytes = 32): { token: string; hash: string } {
	const token = randomBytes(bytes).toString('base64url');
	return { token, hash: hashToken(token) };
}

export function hashToken(token: string): string {
	return createHash('sha256').update(token, 'utf8').digest('hex');
}
