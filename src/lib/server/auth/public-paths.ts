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
