import { createHash, randomBytes } from 'node:crypto';

/** Random, URL-safe identifiers for rows (not secrets). */
export function newId(): string {
	return randomBytes(12).toString('base64url');
}

/** A secret token to hand out once (invitation links, API tokens); store only its hash. */
export function newSecretToken(bytes = 32): string {
	return randomBytes(bytes).toString('base64url');
}

export function hashToken(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}
