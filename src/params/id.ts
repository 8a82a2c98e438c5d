import type { ParamMatcher } from '@sveltejs/kit';

/** Row ids are 16 URL-safe base64 characters. */
export const match = ((param: string) => /^[A-Za-z0-9_-]{6,64}$/.test(param)) satisfies ParamMatcher;
