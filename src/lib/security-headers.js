/**
 * Headers every answer of the web process carries: pages, JSON, errors and static files
 * (`/_app/immutable/*`, `favicon.svg`). Set in `hooks.server.ts` for what SvelteKit renders and in
 * `scripts/start.js` for everything the production server sends, static files included.
 * Plain JavaScript so that `scripts/start.js` can import it without a build step.
 */
export const SECURITY_HEADERS = Object.freeze({
	'X-Frame-Options': 'DENY',
	'X-Content-Type-Options': 'nosniff',
	'Referrer-Policy': 'same-origin',
	'Permissions-Policy': 'camera=(), microphone=(), geolocation=()',
	'Cross-Origin-Resource-Policy': 'same-origin'
});
