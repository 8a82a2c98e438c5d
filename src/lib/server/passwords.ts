import { hash, verify } from '@node-rs/argon2';

// OWASP's password storage guidance for argon2id (from memory): 19 MiB, 2 passes, 1 lane.
const ARGON2ID = { memoryCost: 19456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

export function hashPassword(password: string): Promise<string> {
	return hash(password, ARGON2ID);
}

export async function verifyPassword(passwordHash: string | null, password: string): Promise<boolean> {
	if (!passwordHash) return false;
	try {
		return await verify(passwordHash, password);
	} catch {
		return false;
	}
}

export const PASSWORD_RULE = 'at least 10 characters';

export function passwordProblem(password: string): string | null {
	if (password.length < 10) return `The password is too short: use ${PASSWORD_RULE}.`;
	if (password.length > 256) return 'The password is too long: use at most 256 characters.';
	return null;
}
