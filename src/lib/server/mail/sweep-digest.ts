/**
 * The sweep digest: when a sweep ends (done or failed), one message to every active member of its
 * program who subscribed to digests (managers by default), built from the stored results.
 *
 * `notifySweepFinished` is called by the sweep service right after the status change; the
 * dispatcher's `catchUpSweepDigests` re-checks recently finished sweeps, so a digest is written
 * even if that call was lost (crash, error). The mark `sweep-digest:<id>` and the outbox's unique
 * dedupe key make both paths write each recipient's message once.
 */
import { Op } from 'sequelize';
import { MailMark, MailOutbox, Membership, Program, Sweep, SweepPoint, SweepScenario, User } from '../db/models/index';
import type { SimulationSummary } from '../../engine/simulate';
import type { SweepDefinition } from '../../engine/sweep-grid';
import type { SweepInputs } from '../sweeps/inputs';
import { mailConfig } from './config';
import { enqueue, log, mailWrite, type NewMessage } from './outbox';
import { S, esc, fmt, frame, stackedTables, textTable, type Rendered } from './render';
import { dateTime } from '../../dates';

const RULE_WORDS: Record<string, string> = {
	kneedle: 'the Kneedle knee (Satopää et al., 2011)',
	'max-time-saved-per-kWh': 'the most time saved per kWh'
};

/** Short words for the rule that picked a scenario's recommendation. */
function pickedBy(s: DigestScenario): string {
	if (!s.recommended) return 'baseline';
	return s.method === 'kneedle' ? 'knee' : s.method === 'max-time-saved-per-kWh' ? 'per kWh' : (s.method ?? '–');
}

export interface DigestScenario {
	index: number;
	label: string;
	baselineTime_s: number | null;
	baselineReached: boolean;
	recommended: {
		pointId: number;
		leadTime_s: number;
		setpoint_K: number;
		heaterPowerCap_W: number | null;
		timeSaved_s: number;
		energy_Wh: number;
		timeToTarget_s: number | null;
		deratingDuration_s: number;
		deratingShortfall_Wh: number;
		violations: string[];
	} | null;
	noStrategyBeatsBaseline: boolean;
	/** How the recommendation was picked: 'kneedle', 'max-time-saved-per-kWh' (fallback), or null (none). */
	method: string | null;
	frontSize: number;
	note: string | null;
}

export interface SweepDigest {
	sweepId: number;
	programId: number;
	programName: string;
	sweepName: string;
	status: 'done' | 'failed';
	failureReason: string | null;
	link: string;
	finishedAt: string | null;
	baseScenario: string;
	cells: string[];
	packs: string[];
	axes: { label: string; values: string }[];
	gridPoints: number;
	scenarioCount: number;
	simulationCount: number;
	simulationsDone: number;
	elapsed_ms: number | null;
	compute_ms: number | null;
	scenarios: DigestScenario[];
	largest: { scenarioLabel: string; timeSaved_s: number; energy_Wh: number; leadTime_s: number; setpoint_K: number } | null;
	violations: { count: number; examples: string[] };
}

const list = (xs: number[], f: (x: number) => string, unit: string) => `${xs.map(f).join(', ')} ${unit}`;

function scenarioLabel(axes: { ambient_K: number; stateOfHealth: number; arrivalSoc: number; cellId: string; packId: string }, inputs: SweepInputs, multi: { cells: boolean; packs: boolean }): string {
	const parts = [`${fmt.degC(axes.ambient_K)} °C`, `SoH ${fmt.pct(axes.stateOfHealth)}`, `arrival SoC ${fmt.pct(axes.arrivalSoc)}`];
	if (multi.cells) parts.unshift(inputs.cells[axes.cellId]?.name ?? axes.cellId);
	if (multi.packs) parts.splice(multi.cells ? 1 : 0, 0, inputs.packs[axes.packId]?.name ?? axes.packId);
	return parts.join(' · ');
}

/** Everything the message says, read from the stored sweep, scenarios and points. */
export async function buildSweepDigest(sweepId: number): Promise<SweepDigest | null> {
	const sweep = await Sweep.findByPk(sweepId);
	if (!sweep || (sweep.status !== 'done' && sweep.status !== 'failed')) return null;
	const program = await Program.findByPk(sweep.program_id);
	const stored = JSON.parse(sweep.definition) as { definition: SweepDefinition };
	const def = stored.definition;
	const inputs = JSON.parse(sweep.inputs) as SweepInputs;
	const multi = { cells: def.cellIds.length > 1, packs: def.packIds.length > 1 };
	const ref = (r: { name: string; slug: string; version: number }) => `${r.name} (${r.slug} v${r.version})`;

	const axes = [
		{ label: 'Ambient', values: list(def.ambients_K, fmt.degC, '°C') },
		{ label: 'State of health', values: def.statesOfHealth.map(fmt.pct).join(', ') },
		{ label: 'Arrival state of charge', values: def.arrivalSocs.map(fmt.pct).join(', ') },
		{ label: 'Heater lead time', values: list(def.leadTimes_s, fmt.min, 'min') },
		{ label: 'Coolant set-point', values: list(def.setpoints_K, fmt.degC, '°C') }
	];
	if (def.heaterPowerCaps_W?.length) axes.push({ label: 'Heater power cap', values: list(def.heaterPowerCaps_W, (w) => (w / 1000).toFixed(1), 'kW') });

	const scenarioRows = await SweepScenario.findAll({ where: { sweep_id: sweepId }, order: [['scenario_index', 'ASC']] });
	const kneeIds = scenarioRows.map((s) => s.knee_point_id).filter((x): x is number => x !== null);
	const knees = new Map((await SweepPoint.findAll({ where: { id: kneeIds } })).map((p) => [p.id, p]));
	const scenarios: DigestScenario[] = scenarioRows.map((s) => {
		const k = s.knee_point_id !== null ? knees.get(s.knee_point_id) : undefined;
		const summary = k ? (JSON.parse(k.summary) as SimulationSummary) : null;
		return {
			index: s.scenario_index,
			label: scenarioLabel(JSON.parse(s.axes), inputs, multi),
			baselineTime_s: s.baseline_time_to_target_s,
			baselineReached: Boolean(s.baseline_reached_target),
			recommended:
				k && summary && k.time_saved_s !== null && k.energy_Wh !== null
					? {
							pointId: k.id,
							leadTime_s: k.lead_time_s ?? 0,
							setpoint_K: k.coolant_setpoint_K ?? NaN,
							heaterPowerCap_W: k.heater_power_cap_W,
							timeSaved_s: k.time_saved_s,
							energy_Wh: k.energy_Wh,
							timeToTarget_s: k.time_to_target_s,
							deratingDuration_s: summary.deratingDuration_s ?? 0,
							deratingShortfall_Wh: summary.deratingEnergyShortfall_Wh ?? 0,
							violations: summary.violations ?? []
						}
					: null,
			noStrategyBeatsBaseline: Boolean(s.no_strategy_beats_baseline),
			method: s.knee_method,
			frontSize: (JSON.parse(s.front_point_ids) as number[]).length,
			note: s.note
		};
	});

	const best = await SweepPoint.findOne({
		where: { sweep_id: sweepId, strategy_index: { [Op.ne]: null }, feasible: true, time_saved_s: { [Op.gt]: 0 } },
		order: [['time_saved_s', 'DESC'], ['energy_Wh', 'ASC'], ['id', 'ASC']]
	});
	const bestScenario = best ? scenarioRows.find((s) => s.scenario_index === best.scenario_index) : undefined;

	// Simulations that reached the target but broke a limit on the way (feasible = reached and no violations).
	const violating = await SweepPoint.findAll({
		where: { sweep_id: sweepId, reached_target: true, feasible: false },
		attributes: ['summary'],
		limit: 200
	});
	const violatingCount = await SweepPoint.count({ where: { sweep_id: sweepId, reached_target: true, feasible: false } });
	const examples = [...new Set(violating.flatMap((p) => (JSON.parse(p.summary) as SimulationSummary).violations ?? []))].slice(0, 5);

	// The models declare created_at but Sequelize names the timestamp attribute createdAt; read either.
	const createdAt = (sweep.get('created_at') ?? sweep.get('createdAt')) as Date;
	const start = sweep.started_at ?? createdAt;
	return {
		sweepId,
		programId: sweep.program_id,
		programName: program?.name ?? `Program ${sweep.program_id}`,
		sweepName: sweep.name,
		status: sweep.status,
		failureReason: sweep.failure_reason,
		link: `${mailConfig().origin}/programs/${sweep.program_id}/sweeps/${sweepId}`,
		finishedAt: sweep.finished_at ? new Date(sweep.finished_at).toISOString() : null,
		baseScenario: ref(inputs.baseScenario),
		cells: Object.values(inputs.cells).map(ref),
		packs: Object.values(inputs.packs).map(ref),
		axes,
		gridPoints: sweep.grid_points,
		scenarioCount: scenarioRows.length || Math.round(sweep.grid_points / Math.max(1, def.leadTimes_s.length * def.setpoints_K.length * (def.heaterPowerCaps_W?.length || 1))),
		simulationCount: sweep.simulation_count,
		simulationsDone: sweep.simulations_done,
		elapsed_ms: sweep.finished_at ? new Date(sweep.finished_at).getTime() - new Date(createdAt).getTime() : null,
		compute_ms: sweep.finished_at && start ? new Date(sweep.finished_at).getTime() - new Date(start).getTime() : null,
		scenarios,
		largest:
			best && best.time_saved_s !== null
				? {
						scenarioLabel: bestScenario ? scenarioLabel(JSON.parse(bestScenario.axes), inputs, multi) : `scenario ${best.scenario_index + 1}`,
						timeSaved_s: best.time_saved_s,
						energy_Wh: best.energy_Wh ?? NaN,
						leadTime_s: best.lead_time_s ?? 0,
						setpoint_K: best.coolant_setpoint_K ?? NaN
					}
				: null,
		violations: { count: violatingCount, examples }
	};
}

export function renderSweepDigest(d: SweepDigest, recipientName: string): Rendered {
	const strategies = d.scenarioCount ? Math.round(d.gridPoints / d.scenarioCount) : d.gridPoints;
	const what = [
		`Base scenario: ${d.baseScenario}`,
		`Cells: ${d.cells.join('; ')}`,
		`Packs: ${d.packs.join('; ')}`,
		...d.axes.map((a) => `${a.label}: ${a.values}`),
		`Grid: ${strategies} strategies × ${d.scenarioCount} scenarios = ${d.gridPoints} points (${d.simulationCount} simulations with baselines)`
	];
	const took =
		d.elapsed_ms !== null
			? `It took ${fmt.duration(d.elapsed_ms)} from submission${d.compute_ms !== null && d.compute_ms !== d.elapsed_ms ? ` (${fmt.duration(d.compute_ms)} computing)` : ''}.`
			: '';
	const hello = `Hello ${recipientName},`;
	const finished = d.finishedAt ? `Finished ${dateTime(d.finishedAt)}. ` : '';
	const footerText = `You receive sweep digests for ${d.programName}. Change this under Settings: ${mailConfig().origin}/settings`;
	const footer = { text: footerText, html: `You receive sweep digests for ${esc(d.programName)}. <a href="${esc(mailConfig().origin)}/settings">Change this under Settings</a>.` };

	if (d.status === 'failed') {
		const subject = `[${d.programName}] Sweep “${d.sweepName}” failed`;
		const text = [
			hello,
			'',
			`The sweep “${d.sweepName}” failed after ${d.simulationsDone} of ${d.simulationCount} simulations.`,
			`Reason: ${d.failureReason ?? 'not recorded'}`,
			took,
			'',
			'What was swept:',
			...what.map((w) => `  ${w}`),
			'',
			`Open the sweep: ${d.link}`
		].join('\n');
		const html = `<h1 style="${S.h1}">Sweep “${esc(d.sweepName)}” failed</h1>
<p style="${S.p}">${esc(hello)}</p>
<p style="${S.p}">The sweep failed after ${d.simulationsDone} of ${d.simulationCount} simulations.</p>
<p style="${S.note}"><strong>Reason:</strong> ${esc(d.failureReason ?? 'not recorded')}</p>
${took ? `<p style="${S.p}">${esc(took)}</p>` : ''}
<h2 style="${S.h2}">What was swept</h2>
<ul>${what.map((w) => `<li>${esc(w)}</li>`).join('')}</ul>
<p style="${S.p}"><a style="${S.button}" href="${esc(d.link)}">Open the sweep</a></p>`;
		return frame({ subject, htmlBody: html, textBody: text, footer });
	}

	const beaten = d.scenarios.filter((s) => s.noStrategyBeatsBaseline);
	const subject = d.largest
		? `[${d.programName}] Sweep “${d.sweepName}” finished: up to ${fmt.min(d.largest.timeSaved_s)} min saved across ${d.scenarioCount} scenario${d.scenarioCount === 1 ? '' : 's'}`
		: `[${d.programName}] Sweep “${d.sweepName}” finished: no strategy beat the baseline`;

	const head = ['Scenario', 'Baseline min', 'Lead time min', 'Set-point °C', 'Time saved min', 'Energy kWh', 'Charge min', 'Derated min', 'Picked by'];
	const rows = d.scenarios.map((s) =>
		s.recommended
			? [
					s.label,
					fmt.min(s.baselineTime_s),
					fmt.min(s.recommended.leadTime_s),
					fmt.degC(s.recommended.setpoint_K),
					fmt.min(s.recommended.timeSaved_s),
					fmt.kWh(s.recommended.energy_Wh),
					fmt.min(s.recommended.timeToTarget_s),
					fmt.min(s.recommended.deratingDuration_s),
					pickedBy(s)
				]
			: [s.label, fmt.min(s.baselineTime_s), 'keep default', '–', '–', '–', '–', '–', pickedBy(s)]
	);
	const largest = d.largest
		? `Largest time saved: ${fmt.min(d.largest.timeSaved_s)} min (${d.largest.scenarioLabel}; lead time ${fmt.min(d.largest.leadTime_s)} min, set-point ${fmt.degC(d.largest.setpoint_K)} °C, ${fmt.kWh(d.largest.energy_Wh)} kWh).`
		: 'No strategy saved charging time in any scenario.';
	const noneLine = beaten.length
		? `No strategy beat the baseline in: ${beaten.map((s) => s.label).join('; ')} — keep the pack's default thermal policy there.`
		: 'In every scenario at least one strategy beat the baseline.';
	const derated = d.scenarios.filter((s) => s.recommended && s.recommended.deratingDuration_s > 0);
	const limitLines: string[] = [];
	if (d.violations.count)
		limitLines.push(`${d.violations.count} simulation${d.violations.count === 1 ? '' : 's'} reached the target but broke a limit and were kept off the fronts, e.g. ${d.violations.examples.join('; ')}.`);
	const recViol = d.scenarios.filter((s) => s.recommended && s.recommended.violations.length);
	for (const s of recViol) limitLines.push(`Recommended strategy for ${s.label} reports: ${s.recommended!.violations.join('; ')}.`);
	for (const s of derated)
		limitLines.push(`Recommended strategy for ${s.label} charges below the charger's power for ${fmt.min(s.recommended!.deratingDuration_s)} min (${fmt.kWh(s.recommended!.deratingShortfall_Wh)} kWh short).`);
	if (!limitLines.length) limitLines.push('No limit violations; the recommended strategies charge without derating.');
	const notes = d.scenarios.filter((s) => s.note).map((s) => `${s.label}: ${s.note}`);

	const text = [
		hello,
		'',
		`The sweep “${d.sweepName}” finished. ${finished}${took}`,
		'',
		'What was swept:',
		...what.map((w) => `  ${w}`),
		'',
		'Recommended strategy per scenario (the knee of its Pareto front; energy is what the strategy adds over the baseline):',
		textTable(head, rows),
		`Picked by: "knee" = ${RULE_WORDS.kneedle}; "per kWh" = ${RULE_WORDS['max-time-saved-per-kWh']}; "baseline" = no strategy beats the baseline.`,
		'',
		largest,
		noneLine,
		'',
		'Limits and derating:',
		...limitLines.map((l) => `  - ${l}`),
		...(notes.length ? ['', 'Notes:', ...notes.map((n) => `  - ${n}`)] : []),
		'',
		`Open the sweep: ${d.link}`
	].join('\n');

	const html = `<h1 style="${S.h1}">Sweep “${esc(d.sweepName)}” finished</h1>
<p style="${S.p}">${esc(hello)}</p>
<p style="${S.p}">${esc(finished)}${esc(took)}</p>
<p style="${S.p}"><strong>${esc(largest)}</strong></p>
<h2 style="${S.h2}">Recommended strategy per scenario</h2>
<p style="${S.p};${S.muted}">The knee of each scenario's Pareto front (${esc(RULE_WORDS.kneedle)}; where a front is too short or straight for a knee, ${esc(RULE_WORDS['max-time-saved-per-kWh'])}); energy is what the strategy adds over the baseline.</p>
${stackedTables(head, rows)}
<p style="${beaten.length ? S.note : S.p}">${esc(noneLine)}</p>
<h2 style="${S.h2}">Limits and derating</h2>
<ul>${limitLines.map((l) => `<li>${esc(l)}</li>`).join('')}</ul>
${notes.length ? `<h2 style="${S.h2}">Notes</h2><ul>${notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>` : ''}
<h2 style="${S.h2}">What was swept</h2>
<ul>${what.map((w) => `<li>${esc(w)}</li>`).join('')}</ul>
<p style="${S.p}"><a style="${S.button}" href="${esc(d.link)}">Open the sweep</a></p>`;
	return frame({ subject, htmlBody: html, textBody: text, footer });
}

/** Active members of the program who subscribed to digests. */
export async function digestRecipients(programId: number): Promise<User[]> {
	const subs = await Membership.findAll({ where: { program_id: programId, digest_subscribed: true } });
	if (!subs.length) return [];
	return User.findAll({ where: { id: subs.map((m) => m.user_id), active: true }, order: [['email', 'ASC']] });
}

const markKey = (sweepId: number) => `sweep-digest:${sweepId}`;

/**
 * Write the digest of a finished (done or failed) sweep into the outbox, once. Returns how many
 * messages were written (0 if already handled, not finished, or nobody subscribed).
 */
export async function writeSweepDigest(sweepId: number): Promise<number> {
	if (await MailMark.findByPk(markKey(sweepId))) return 0;
	const digest = await buildSweepDigest(sweepId);
	if (!digest) return 0;
	const recipients = await digestRecipients(digest.programId);
	const messages: NewMessage[] = recipients.map((u) => ({
		dedupeKey: `sweep-digest:${sweepId}:${u.id}`,
		kind: 'sweep-digest',
		to: { address: u.email, name: u.name, userId: u.id },
		programId: digest.programId,
		rendered: renderSweepDigest(digest, u.name)
	}));
	return mailWrite(async (transaction) => {
		if (await MailMark.findByPk(markKey(sweepId), { transaction })) return 0;
		await enqueue(messages, transaction);
		await MailMark.create({ key: markKey(sweepId), value: `${digest.status}:${messages.length}` }, { transaction });
		return messages.length;
	});
}

/** Called by the sweep service when a sweep becomes done or failed. Never throws. */
export async function notifySweepFinished(sweepId: number): Promise<void> {
	try {
		const n = await writeSweepDigest(sweepId);
		if (n) log(`digest of sweep ${sweepId} queued for ${n} recipient${n === 1 ? '' : 's'}`);
	} catch (e) {
		log(`could not write the digest of sweep ${sweepId} yet (${(e as Error).message}); the dispatcher will try again`);
	}
}

const failedAt = new Map<number, number>();

/** Safety net: finished sweeps (since mail was installed, last 7 days) with no digest mark yet. */
export async function catchUpSweepDigests(now = new Date()): Promise<number> {
	const installed = await MailMark.findByPk('installed_at');
	const since = new Date(Math.max(installed ? Date.parse(installed.value) : now.getTime(), now.getTime() - 7 * 86_400_000));
	const candidates = await Sweep.findAll({
		where: { status: { [Op.in]: ['done', 'failed'] }, finished_at: { [Op.gte]: since } },
		attributes: ['id'],
		order: [['id', 'ASC']]
	});
	if (!candidates.length) return 0;
	const marked = new Set((await MailMark.findAll({ where: { key: candidates.map((s) => markKey(s.id)) }, attributes: ['key'] })).map((m) => m.key));
	let written = 0;
	for (const s of candidates) {
		if (marked.has(markKey(s.id))) continue;
		const retryAt = failedAt.get(s.id);
		if (retryAt && retryAt > now.getTime()) continue;
		try {
			written += await writeSweepDigest(s.id);
			failedAt.delete(s.id);
		} catch (e) {
			failedAt.set(s.id, now.getTime() + 5 * 60_000);
			log(`could not write the digest of sweep ${s.id} (${(e as Error).message}); next try in 5 min`);
		}
	}
	return written;
}

/** For tests and the admin page: the digest rows of a sweep. */
export function digestMessages(sweepId: number) {
	return MailOutbox.findAll({ where: { dedupe_key: { [Op.like]: `sweep-digest:${sweepId}:%` } }, order: [['to_address', 'ASC']] });
}
