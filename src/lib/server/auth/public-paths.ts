/** Paths anyone may open without signing in. Everything else is denied by the gate in hooks. */
const PUBLIC_PAGES = ['/signin', '/signin/forgot', '/welcome', '/health'];
const PUBLIC_PREFIXES = ['/welcome/', '/_app/', '/favicon'];

export function isPublicPath(pathname: string, method: string): boolean {
	if (PUBLIC_PAGES.includes(pathname)) return true;
	if (PUBLIC_PREFIXES.some((p) => pathname.startsWith(p))) return true;
	if (pathname === '/api/v1/session' && method === 'POST') return true;
	if (pathname === '/api/v1/openapi.json') return true;
	return false;
}

/** Where the user is sent to give the two-step code after the password. */
export const SECOND_FACTOR_PAGE = '/signin/code';

/**
 * What a half-signed-in session (password given, two-step code still missing) may reach: the code
 * page and its API, signing out, and the app's static assets. Everything else sends it to the code page
 * (pages) or answers 401 `second-factor-required` (API).
 */
export function isHalfSignedInPath(pathname: string, method: string): boolean {
	if (pathname === SECOND_FACTOR_PAGE || pathname === '/signout' || pathname === '/health') return true;
	if (pathname.startsWith('/_app/') || pathname.startsWith('/favicon')) return true;
	if (pathname === '/api/v1/session/second-factor' && method === 'POST') return true;
	if (pathname === '/api/v1/session' && method === 'DELETE') return true;
	return false;
}

/** The code page's address for a request sent there, keeping where the person wanted to go (local paths only). */
export function secondFactorPageFor(url: URL): string {
	const back = url.pathname.startsWith('/signin') ? url.searchParams.get('redirectTo') : url.pathname + url.search;
	const local = back && back.startsWith('/') && !back.startsWith('//') && !back.startsWith('/\\') && back !== '/';
	return local ? `${SECOND_FACTOR_PAGE}?redirectTo=${encodeURIComponent(back)}` : SECOND_FACTOR_PAGE;
}
