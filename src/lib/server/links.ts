import { env } from '$env/dynamic/private';

/**
 * The address e-mailed links start with. ORIGIN when configured, so a forged Host
 * header can never point a reset link at somebody else's site; the request's own
 * origin only in development, where ORIGIN is often unset.
 */
export function publicOrigin(requestUrl: URL): string {
	const configured = env.ORIGIN?.trim();
	return (configured || requestUrl.origin).replace(/\/+$/, '');
}
