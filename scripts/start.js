// `npm start`: serves the built app (run `npm run build` first) on PORT (default 3000).
// The SvelteKit server's init hook opens the database, starts the private redis-server (unless
// REDIS_URL is set), the in-process sweep worker and the mail outbox.
import fs from 'node:fs';

if (!fs.existsSync(new URL('../build/index.js', import.meta.url))) {
	console.error('No build found. Run `npm run build` first (or use the README demo command).');
	process.exit(1);
}
process.env.PORT ??= '3000';
process.env.NODE_ENV ??= 'production';
// Uploads are refused above 5 MB with a clear message (src/lib/uploads); the server must accept a
// little more than that, or adapter-node's default 512 kB body limit answers 413 first.
process.env.BODY_SIZE_LIMIT ??= '8M';
// Form actions compare the request's Origin with this; set ORIGIN to the public URL behind a proxy.
process.env.ORIGIN ??= `http://localhost:${process.env.PORT}`;
console.log(`Paretherm: open ${process.env.ORIGIN}`);
await import('../build/index.js');
