// `npm start`: serves the built app (run `npm run build` first) on PORT (default 3000).
// The SvelteKit server's init hook opens the database, starts the private redis-server (unless
// REDIS_URL is set), the in-process sweep worker and the mail outbox.
import fs from 'node:fs';
import http from 'node:http';
import { SECURITY_HEADERS } from '../src/lib/security-headers.js';

if (!fs.existsSync(new URL('../build/index.js', import.meta.url))) {
	console.error('No build found. Run `npm run build` first (or use the README demo command).');
	process.exit(1);
}
process.env.PORT ??= '3000';
process.env.NODE_ENV ??= 'production';
// Uploads are refused above 5 MB with a clear message (src/lib/uploads); the server must accept a
// little more than that, or adapter-node's default 512 kB body limit answers 413 first. JSON API
// bodies have their own, smaller limit (PARETHERM_JSON_BODY_LIMIT, checked in hooks.server.ts).
process.env.BODY_SIZE_LIMIT ??= '8M';
// Form actions compare the request's Origin with this; set ORIGIN to the public URL behind a proxy.
process.env.ORIGIN ??= `http://localhost:${process.env.PORT}`;
console.log(`Paretherm: open ${process.env.ORIGIN}`);
const { server } = await import('../build/index.js').catch((e) => {
	// A setting the configuration refuses: say which and what is allowed, without a stack trace.
	if (e?.name !== 'ConfigError') throw e;
	console.error(`Paretherm cannot start; fix these settings:\n${e.message}`);
	process.exit(2);
});

const httpServer = server?.server;
if (!(httpServer instanceof http.Server)) throw new Error('The built server exposes no HTTP server; check the @sveltejs/adapter-node version.');
// Runs before the app's own handler (static files and SvelteKit) for every request.
httpServer.prependListener('request', (req, res) => {
	for (const [name, value] of Object.entries(SECURITY_HEADERS)) res.setHeader(name, value);
	// An answer sent before the request body was read (refused sign-in, 401/403/413, a route that
	// never reads it) leaves the rest of the body on the connection; SvelteKit's body reader has
	// paused it, so the client would block writing and then see a reset, and the next request on
	// that connection would never be read. Discard what is left instead, as Node does for bodies
	// nobody listened to.
	res.once('finish', () => {
		if (req.complete || req.destroyed) return;
		req.removeAllListeners('data');
		req.resume();
	});
});
