/**
 * Run one scenario file through the engine and print its summary as JSON.
 *
 *   npm run simulate -- <scenario.json> [--out <dir>]
 *   npm run simulate -- --example        (prints an example file using demo ids)
 *   npm run simulate -- --example-full   (same, with the cell and pack written out)
 *
 * With --out, writes <dir>/summary.json and <dir>/series.csv. Bad input ends
 * with one line on stderr naming the field, and exit code 1.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { exampleScenarioFile, parseScenarioFile, simulate, type TimeSeries } from '../src/lib/engine/index';

const USAGE = 'usage: npm run simulate -- <scenario.json> [--out <dir>] | --example | --example-full';

class CliError extends Error {}

function parseArgs(argv: string[]): { file?: string; out?: string; example?: 'ids' | 'full' } {
	const res: { file?: string; out?: string; example?: 'ids' | 'full' } = {};
	for (let i = 0; i < argv.length; i++) {
		const a = argv[i];
		if (a === '--example') res.example = 'ids';
		else if (a === '--example-full') res.example = 'full';
		else if (a === '--out') {
			const dir = argv[++i];
			if (!dir) throw new CliError(`--out needs a directory; ${USAGE}`);
			res.out = dir;
		} else if (a === '--help' || a === '-h') {
			console.log(USAGE);
			process.exit(0);
		} else if (a.startsWith('-')) throw new CliError(`unknown option ${a}; ${USAGE}`);
		else if (res.file) throw new CliError(`give one scenario file (got ${res.file} and ${a}); ${USAGE}`);
		else res.file = a;
	}
	return res;
}

export function seriesCsv(s: TimeSeries): string {
	const cols: (keyof TimeSeries)[] = [
		't_s',
		'phase',
		'current_A',
		'voltage_V',
		'soc',
		'cellTemp_K',
		'cellTempMax_K',
		'coolantTemp_K',
		'anodePotential_V',
		'heaterPower_W',
		'chillerPower_W',
		'packPower_W',
		'limit'
	];
	const lines = [cols.join(',')];
	for (let i = 0; i < s.t_s.length; i++) {
		lines.push(cols.map((c) => {
			const v = s[c][i];
			return typeof v === 'number' ? Number(v.toPrecision(8)).toString() : String(v);
		}).join(','));
	}
	return lines.join('\n') + '\n';
}

function main(): void {
	const args = parseArgs(process.argv.slice(2));
	if (args.example) {
		console.log(JSON.stringify(exampleScenarioFile(args.example === 'full'), null, 2));
		return;
	}
	if (!args.file) throw new CliError(`no scenario file given; ${USAGE}`);
	let text: string;
	try {
		text = readFileSync(args.file, 'utf8');
	} catch (e) {
		const code = (e as NodeJS.ErrnoException).code;
		throw new CliError(`cannot read ${args.file}: ${code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a directory' : (e as Error).message}`);
	}
	let json: unknown;
	try {
		json = JSON.parse(text);
	} catch (e) {
		throw new CliError(`${args.file}: not valid JSON (${(e as Error).message})`);
	}
	let input;
	try {
		input = parseScenarioFile(json);
	} catch (e) {
		throw new CliError(`${args.file}: ${(e as Error).message}`);
	}
	const result = simulate({ ...input, options: { ...input.options, keepSeries: args.out !== undefined } });
	const summaryJson = JSON.stringify(result.summary, null, 2);
	console.log(summaryJson);
	if (args.out) {
		mkdirSync(args.out, { recursive: true });
		writeFileSync(join(args.out, 'summary.json'), summaryJson + '\n');
		if (result.series) writeFileSync(join(args.out, 'series.csv'), seriesCsv(result.series));
	}
}

try {
	main();
} catch (e) {
	// One line, no stack trace: the message says what to change.
	const msg = e instanceof Error ? e.message : String(e);
	process.stderr.write(`simulate: ${msg.split('\n')[0]}\n`);
	process.exit(1);
}
