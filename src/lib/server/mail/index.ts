/**
 * The mail runtime: one dispatcher per web process, on an interval, off the request path. Each
 * tick catches up on events (strategy events after the cursor, finished sweeps without a
 * digest), writes the daily summaries when due, then sends what is due through the transport.
 */
import { ensureDb } from '../db/index';
import { mailConfig, describeSmtp } from './config';
import { dispatchDue, log, setKick } from './outbox';
import { catchUpSweepDigests } from './sweep-digest';
import { dailySummaryDue, processStrategyEvents, runDailySummaries } from './strategy-notifications';
import { transportFromConfig, type MailTransport } from './transport';

export { notifySweepFinished } from './sweep-digest';
export { notifyStrategyActivity } from './strategy-notifications';
export { sendInvitationMail } from './invitation';

export interface MailDispatcher {
	transport: MailTransport;
	/** Run one tick now (also what the interval runs); resolves when it has finished. */
	tick(now?: Date): Promise<void>;
	stop(): void;
}

// Kept on globalThis so a vite dev reload of this module does not start a second dispatcher
// (two would send the same due row twice).
const slot = globalThis as typeof globalThis & { __parethermMail?: MailDispatcher | null };

export function mailDispatcher(): MailDispatcher | null {
	return slot.__parethermMail ?? null;
}

export function startMailDispatcher(opts: { transport?: MailTransport; interval_ms?: number } = {}): MailDispatcher {
	const existing = slot.__parethermMail;
	if (existing) return existing;
	const cfg = mailConfig(); // throws with a clear message on a malformed SMTP_URL
	const transport = opts.transport ?? transportFromConfig(cfg);
	log(cfg.smtpUrl ? `sending through ${describeSmtp(cfg.smtpUrl)} as ${cfg.from}` : 'SMTP_URL is unset: messages go to the local outbox (Admin → Outbox)');

	let running: Promise<void> | null = null;
	let again = false;
	const step = async (what: string, fn: () => Promise<unknown>) => {
		try {
			await fn();
		} catch (e) {
			log(`${what}: ${(e as Error).message}`);
		}
	};
	const tick = (now?: Date): Promise<void> => {
		if (running) {
			again = true;
			return running;
		}
		running = (async () => {
			do {
				again = false;
				const at = now ?? new Date();
				await step('database', () => ensureDb());
				await step('strategy notifications', () => processStrategyEvents());
				await step('sweep digests', () => catchUpSweepDigests(at));
				await step('daily summaries', async () => {
					if (await dailySummaryDue(at)) await runDailySummaries(at);
				});
				await step('sending', () => dispatchDue({ transport, now: at, config: cfg }));
			} while (again);
		})().finally(() => (running = null));
		return running;
	};
	let soon: NodeJS.Timeout | null = null;
	setKick(() => {
		soon ??= setTimeout(() => {
			soon = null;
			void tick();
		}, 50);
	});
	const timer = setInterval(() => void tick(), opts.interval_ms ?? cfg.interval_ms);
	timer.unref();
	const dispatcher: MailDispatcher = {
		transport,
		tick,
		stop() {
			clearInterval(timer);
			if (soon) clearTimeout(soon);
			setKick(null);
			transport.close();
			slot.__parethermMail = null;
		}
	};
	slot.__parethermMail = dispatcher;
	void tick();
	return dispatcher;
}

export function stopMailDispatcher(): void {
	slot.__parethermMail?.stop();
}
