/**
 * The longest redirect target kept. A target rides in the Location header and the sign-in cookie;
 * far longer ones would overflow a client's header limit (Node's HTTP client stops at 16 KiB).
 */
export const MAX_REDIRECT_LENGTH = 2048;

/** Only same-site paths of a sane length; anything else goes home (a redirect target taken from a request). */
export function safeRedirect(v: unknown): string {
	return typeof v === 'string' &&
		v.length <= MAX_REDIRECT_LENGTH &&
		v.startsWith('/') &&
		!v.startsWith('//') &&
		!v.startsWith('/\\')
		? v
		: '/';
}
