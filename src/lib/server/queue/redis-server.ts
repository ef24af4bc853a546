/**
 * A private `redis-server` child for installs without `REDIS_URL`.
 *
 * Why a real server: BullMQ's Lua scripts need cmsgpack/cjson/bit/struct and the CLIENT command,
 * which ioredis-mock lacks, so the queue always runs on real Redis.
 * The child listens only on a unix socket in the data folder (or on 127.0.0.1 when the socket
 * path would be too long for the kernel's 108-byte limit), keeps an append-only file under
 * `<data>/redis` so queued sweeps survive a restart, and is restarted with back-off if it dies.
 *
 * One server per data folder: `owner.json` names the Paretherm process that supervises it. A
 * second process on the same folder while the owner lives connects to the owner's server. A web
 * process killed with SIGKILL cannot take its child with it, so the child writes a pid file; the
 * next start stops such an orphan (SIGTERM: Redis flushes its AOF and exits) before starting its
 * own, rather than letting two servers share one socket and AOF.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { Redis } from 'ioredis';
import { parseConfig } from '../config';

export type RedisTarget = { kind: 'url'; url: string } | { kind: 'socket'; path: string } | { kind: 'tcp'; host: string; port: number };

export function describeTarget(t: RedisTarget): string {
	if (t.kind === 'url') return t.url.replace(/\/\/[^@/]*@/, '//***@'); // never log a password
	if (t.kind === 'socket') return `unix:${t.path}`;
	return `redis://${t.host}:${t.port}`;
}

const MISSING_MESSAGE =
	'Paretherm runs its sweep queue on Redis and could not find the `redis-server` program. ' +
	'Install it (Debian/Ubuntu: `sudo apt-get install -y redis-server`; macOS: `brew install redis`) ' +
	'or set REDIS_URL=redis://host:6379 to use a Redis server you already run. ' +
	'Set REDIS_SERVER_BIN=/path/to/redis-server if it is installed somewhere unusual.';

export class RedisServerMissingError extends Error {
	constructor() {
		super(MISSING_MESSAGE);
		this.name = 'RedisServerMissingError';
	}
}

/** Absolute path of the redis-server binary, or null. REDIS_SERVER_BIN wins over PATH. */
export function findRedisServerBinary(env: NodeJS.ProcessEnv = process.env): string | null {
	const explicit = parseConfig(env).redis.serverBin;
	if (explicit) return isExecutable(explicit) ? path.resolve(explicit) : null;
	const dirs = [...(env.PATH ?? '').split(path.delimiter), '/usr/bin', '/usr/sbin', '/usr/local/bin', '/opt/homebrew/bin'];
	for (const dir of dirs) {
		if (!dir) continue;
		const candidate = path.join(dir, 'redis-server');
		if (isExecutable(candidate)) return candidate;
	}
	return null;
}

function isExecutable(file: string): boolean {
	try {
		fs.accessSync(file, fs.constants.X_OK);
		return fs.statSync(file).isFile();
	} catch {
		return false;
	}
}

function sleep(ms: number): Promise<void> {
	return new Promise((r) => setTimeout(r, ms));
}

function isAlive(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch (e) {
		return (e as NodeJS.ErrnoException).code === 'EPERM';
	}
}

function looksLikeRedis(pid: number): boolean {
	try {
		return fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes('redis-server');
	} catch {
		// No /proc (macOS): trust the pid file, which only our child writes.
		return isAlive(pid);
	}
}

async function freeLoopbackPort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.unref();
		srv.on('error', reject);
		srv.listen(0, '127.0.0.1', () => {
			const port = (srv.address() as net.AddressInfo).port;
			srv.close(() => resolve(port));
		});
	});
}

/** Connect and PING; true once the server answers. */
async function ping(target: RedisTarget): Promise<boolean> {
	const client =
		target.kind === 'socket'
			? new Redis({ path: target.path, lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null })
			: target.kind === 'tcp'
				? new Redis({ host: target.host, port: target.port, lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null })
				: new Redis(target.url, { lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null });
	client.on('error', () => {}); // a refused connection while starting up is expected
	try {
		await client.connect();
		return (await client.ping()) === 'PONG';
	} catch {
		return false;
	} finally {
		client.disconnect();
	}
}

export interface PrivateRedisOptions {
	/** Folder for the socket, AOF, pid file and log; created if missing. */
	dir: string;
	/** Override the binary (tests); otherwise REDIS_SERVER_BIN or PATH. */
	binary?: string;
	/** How long to wait for the server to answer PING on start. */
	startTimeout_ms?: number;
	log?: (msg: string) => void;
}

/**
 * Starts, watches and restarts one redis-server child. `start()` resolves with the target to
 * connect to once the server answers PING; ioredis clients reconnect by themselves after a
 * restart, so callers keep using the same target.
 */
export class PrivateRedis {
	readonly dir: string;
	private readonly binary: string;
	private readonly startTimeout_ms: number;
	private readonly log: (msg: string) => void;
	private child: ChildProcess | null = null;
	private stopping = false;
	private target: RedisTarget | null = null;
	private restartDelay_ms = 500;
	private startedAt = 0;
	private readonly onProcessExit = () => this.child?.kill('SIGTERM');

	constructor(opts: PrivateRedisOptions) {
		this.dir = path.resolve(opts.dir);
		const bin = opts.binary ?? findRedisServerBinary();
		if (!bin) throw new RedisServerMissingError();
		this.binary = bin;
		this.startTimeout_ms = opts.startTimeout_ms ?? 15_000;
		this.log = opts.log ?? ((m) => console.log(`[paretherm] ${m}`));
	}

	get pidFile(): string {
		return path.join(this.dir, 'redis-server.pid');
	}

	get logFile(): string {
		return path.join(this.dir, 'redis-server.log');
	}

	get pid(): number | undefined {
		return this.child?.pid;
	}

	get ownerFile(): string {
		return path.join(this.dir, 'owner.json');
	}

	/** True when another live Paretherm process owns the server and this one only connects to it. */
	get shared(): boolean {
		return this.sharedWith !== null;
	}
	private sharedWith: number | null = null;

	async start(): Promise<RedisTarget> {
		fs.mkdirSync(this.dir, { recursive: true, mode: 0o700 });
		// One redis-server per data folder. A second Paretherm process on the same folder (a second
		// web process, a script) uses the owner's server instead of starting another one on the
		// same socket and append-only file.
		const owner = this.readOwner();
		if (owner && owner.pid !== process.pid && isAlive(owner.pid)) {
			for (let i = 0; i < 30; i++) {
				if (await ping(owner.target)) {
					this.sharedWith = owner.pid;
					this.target = owner.target;
					this.log(`using the private redis-server of Paretherm process ${owner.pid} at ${describeTarget(owner.target)}`);
					return owner.target;
				}
				await sleep(100);
			}
			this.log(`Paretherm process ${owner.pid} owns ${this.dir} but its redis-server does not answer; taking over`);
		}
		await this.stopOrphan();
		const socketPath = path.join(this.dir, 'redis.sock');
		// sockaddr_un holds 108 bytes including the terminator; deep data folders fall back to TCP.
		this.target =
			Buffer.byteLength(socketPath) < 100
				? { kind: 'socket', path: socketPath }
				: { kind: 'tcp', host: '127.0.0.1', port: await freeLoopbackPort() };
		fs.writeFileSync(this.ownerFile, JSON.stringify({ pid: process.pid, target: this.target }));
		process.on('exit', this.onProcessExit);
		await this.spawnAndWait();
		return this.target;
	}

	private readOwner(): { pid: number; target: RedisTarget } | null {
		try {
			const o = JSON.parse(fs.readFileSync(this.ownerFile, 'utf8'));
			return Number.isInteger(o?.pid) && o?.target?.kind ? o : null;
		} catch {
			return null;
		}
	}

	/** SIGTERM the child (Redis fsyncs the AOF on SIGTERM) and wait for it to exit. */
	async stop(): Promise<void> {
		this.stopping = true;
		if (this.sharedWith !== null) return; // not ours to stop
		process.off('exit', this.onProcessExit);
		if (this.readOwner()?.pid === process.pid) fs.rmSync(this.ownerFile, { force: true });
		const child = this.child;
		if (!child || child.exitCode !== null || child.signalCode !== null) return;
		const exited = new Promise<void>((r) => child.once('exit', () => r()));
		child.kill('SIGTERM');
		const timer = setTimeout(() => child.kill('SIGKILL'), 10_000);
		await exited;
		clearTimeout(timer);
	}

	private args(): string[] {
		const t = this.target!;
		const listen =
			t.kind === 'socket'
				? ['--port', '0', '--unixsocket', t.path, '--unixsocketperm', '700']
				: ['--port', String((t as { port: number }).port), '--bind', '127.0.0.1'];
		return [
			...listen,
			'--dir', this.dir,
			'--pidfile', this.pidFile,
			'--appendonly', 'yes',
			'--appendfsync', 'everysec',
			// The AOF is the durable copy; periodic RDB snapshots would only duplicate it.
			'--save', '',
			// BullMQ requires that Redis never evicts its keys.
			'--maxmemory-policy', 'noeviction',
			'--protected-mode', 'yes',
			'--daemonize', 'no',
			'--logfile', ''
		];
	}

	private async spawnAndWait(): Promise<void> {
		const logFd = fs.openSync(this.logFile, 'a');
		const child = spawn(this.binary, this.args(), { stdio: ['ignore', logFd, logFd] });
		fs.closeSync(logFd);
		this.child = child;
		this.startedAt = Date.now();
		let earlyExit: string | null = null;
		let ready = false;
		child.once('exit', (code, signal) => {
			earlyExit = `exit code ${code ?? '-'}${signal ? `, signal ${signal}` : ''}`;
			if (this.child === child) this.child = null;
			// Only a server that had come up is restarted here; a failed start is the caller's to handle.
			if (ready && !this.stopping) void this.restartAfterCrash(earlyExit);
		});
		child.once('error', (err) => {
			earlyExit = err.message;
		});

		const deadline = Date.now() + this.startTimeout_ms;
		while (Date.now() < deadline) {
			if (earlyExit) break;
			if (await ping(this.target!)) {
				ready = true;
				this.log(`private redis-server (pid ${child.pid}) ready at ${describeTarget(this.target!)}, data in ${this.dir}`);
				return;
			}
			await sleep(100);
		}
		if (!earlyExit) child.kill('SIGKILL');
		throw new Error(
			`The private redis-server did not start (${earlyExit ?? `no answer within ${this.startTimeout_ms} ms`}). ` +
				`Its log is ${this.logFile}; last lines:\n${this.logTail()}\n` +
				'Fix the problem shown there, or set REDIS_URL to use another Redis server.'
		);
	}

	private async restartAfterCrash(reason: string): Promise<void> {
		// Back off on a crash loop; reset after a minute of healthy running.
		if (Date.now() - this.startedAt > 60_000) this.restartDelay_ms = 500;
		const delay = this.restartDelay_ms;
		this.restartDelay_ms = Math.min(this.restartDelay_ms * 2, 30_000);
		this.log(`private redis-server stopped unexpectedly (${reason}); restarting in ${delay} ms. See ${this.logFile}.`);
		await sleep(delay);
		if (this.stopping) return;
		try {
			await this.spawnAndWait();
		} catch (e) {
			this.log(String((e as Error).message));
			void this.restartAfterCrash('restart failed');
		}
	}

	/** A server left running by a predecessor killed with SIGKILL: stop it cleanly first. */
	private async stopOrphan(): Promise<void> {
		let pid: number;
		try {
			pid = Number(fs.readFileSync(this.pidFile, 'utf8').trim());
		} catch {
			return;
		}
		if (!Number.isInteger(pid) || pid <= 1 || !isAlive(pid) || !looksLikeRedis(pid)) return;
		this.log(`stopping redis-server pid ${pid} left running by an earlier Paretherm process`);
		process.kill(pid, 'SIGTERM');
		const deadline = Date.now() + 10_000;
		while (isAlive(pid) && Date.now() < deadline) await sleep(50);
		if (isAlive(pid)) process.kill(pid, 'SIGKILL');
		while (isAlive(pid)) await sleep(50);
	}

	private logTail(lines = 15): string {
		try {
			return fs.readFileSync(this.logFile, 'utf8').trimEnd().split('\n').slice(-lines).join('\n');
		} catch {
			return '(no log)';
		}
	}
}
