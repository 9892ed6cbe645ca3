/**
 * Escapement command line. `audit FILE [--json] [--max-cycles N] [--tolerance X]`: prints the
 * escapement.audit/1 JSON or a readable summary; problems go to stderr with exit code 1 (2 for usage).
 */
import { auditScheme, EngineError, type Audit } from '../lib/engine/index';
import { writeFile } from 'node:fs/promises';
import { writeTemplate } from '../lib/server/sheets/template';
import { loadScheme, SchemeLoadError } from './load-scheme';

const USAGE = `usage: escapement audit FILE [--json] [--max-cycles N] [--tolerance LOG10]
       escapement template FILE.xlsx   (writes the rate-table template)
  FILE         a scheme: escapement.scheme/1 JSON, or a rate table (.xlsx, .csv)
  --json       print the escapement.audit/1 JSON instead of a summary
  --max-cycles cap on enumerated cycles (default 20000; 0 = judge on a cycle basis only)
  --tolerance  allowed |deviation| of log10(Π+/Π−) (default 0.01)`;

const fmt = (x: number | null, digits = 4): string => (x === null ? '—' : Number(x.toPrecision(digits)).toString());

export function summary(audit: Audit, name: string): string {
	const lines: string[] = [];
	const v = audit.verdictCounts;
	lines.push(`Audit of ${name || 'unnamed scheme'} (engine ${audit.engineVersion})`);
	lines.push(
		`${audit.states.length} states, ${audit.steps.length} steps, ${audit.cycleCount} cycles${audit.cyclesComplete ? '' : ' listed (incomplete)'}`
	);
	lines.push(
		`Verdicts${audit.cyclesComplete ? '' : ' of the cycles judged (listed and basis)'}: ${v.consistent} consistent, ${v.violation} violation, ${v.irreversible} irreversible, ${v.unbalanced} unbalanced`
	);
	lines.push(`Consistency ${audit.consistencyComplete ? 'decided for every cycle' : 'NOT decided for every cycle'}: ${audit.consistencyScope.summary}`);
	const worst = [...audit.cycles]
		.filter((c) => c.deviationLog10 !== null)
		.sort((a, b) => Math.abs(b.deviationLog10!) - Math.abs(a.deviationLog10!))
		.slice(0, 5);
	if (worst.length) {
		lines.push('', 'Worst cycles (deviation of log10 Π+/Π− from the expectation):');
		for (const c of worst)
			lines.push(`  ${c.verdict.padEnd(12)} ${fmt(c.deviationLog10).padStart(10)}  ${c.states.join(' → ')} → ${c.states[0]}`);
	}
	const o = audit.observables;
	lines.push('', 'Observables:');
	lines.push(`  velocity            ${fmt(o.velocityNmPerS)} nm/s`);
	lines.push(`  diffusion           ${fmt(o.diffusionNm2PerS)} nm²/s`);
	lines.push(`  randomness          ${fmt(o.randomness)}`);
	lines.push(`  entropy production  ${fmt(o.entropyProductionKTPerS)} kB/s`);
	for (const [id, rate] of Object.entries(o.reactionRatesPerS)) lines.push(`  ${id.padEnd(19)} ${fmt(rate)} /s`);
	lines.push(`  efficiency          ${fmt(o.efficiency)}${o.efficiencyRegime ? ` (${o.efficiencyRegime} regime)` : o.efficiencyNote ? ` (${o.efficiencyNote})` : ''}`);
	const stalls = o.stallForcesPN ?? [];
	lines.push(`  stall force         ${o.stallForcePN === null ? '—' : `${fmt(o.stallForcePN)} pN`}${stalls.length > 1 ? ` (nearest zero load; all: ${stalls.map((f) => fmt(f)).join(', ')} pN)` : ''}`);
	if (audit.findings.length) {
		lines.push('', 'Findings:');
		for (const f of audit.findings) lines.push(`  - ${f.message}`);
	}
	if (audit.correction && !audit.correction.feasible) lines.push('', `No consistent correction: ${audit.correction.reason}`);
	else if (audit.correction?.changes.length) {
		lines.push('', 'Proposed correction (smallest log-space change):');
		for (const c of audit.correction.changes)
			lines.push(`  ${c.stepId}.${c.rate}: ${fmt(c.from)} → ${fmt(c.to)} (×${fmt(c.factor, 4)})`);
	}
	return lines.join('\n');
}

export async function main(argv: string[]): Promise<number> {
	const [command, ...rest] = argv;
	if (command === 'template') {
		if (rest.length !== 1 || !rest[0].toLowerCase().endsWith('.xlsx')) {
			process.stderr.write(`template needs one FILE ending in .xlsx\n${USAGE}\n`);
			return 2;
		}
		await writeFile(rest[0], await writeTemplate());
		process.stderr.write(`wrote ${rest[0]}\n`);
		return 0;
	}
	if (command !== 'audit') {
		process.stderr.write(`${command ? `unknown command "${command}"\n` : ''}${USAGE}\n`);
		return 2;
	}
	let file: string | undefined;
	let json = false;
	const options: { maxCycles?: number; toleranceLog10?: number } = {};
	for (let i = 0; i < rest.length; i++) {
		const arg = rest[i];
		if (arg === '--json') json = true;
		else if (arg === '--max-cycles' || arg === '--tolerance') {
			const value = Number(rest[++i]);
			if (!Number.isFinite(value) || value < 0) {
				process.stderr.write(`${arg} needs a number ≥ 0\n${USAGE}\n`);
				return 2;
			}
			if (arg === '--max-cycles') options.maxCycles = Math.floor(value);
			else options.toleranceLog10 = value;
		} else if (arg.startsWith('--')) {
			process.stderr.write(`unknown option ${arg}\n${USAGE}\n`);
			return 2;
		} else if (!file) file = arg;
		else {
			process.stderr.write(`one FILE only (got "${file}" and "${arg}")\n`);
			return 2;
		}
	}
	if (!file) {
		process.stderr.write(`audit needs a FILE\n${USAGE}\n`);
		return 2;
	}
	try {
		const scheme = await loadScheme(file);
		const audit = auditScheme(scheme, options);
		process.stdout.write(json ? `${JSON.stringify(audit, null, 2)}\n` : `${summary(audit, scheme.name)}\n`);
		return 0;
	} catch (err) {
		if (err instanceof SchemeLoadError) {
			process.stderr.write(`cannot audit ${err.file}:\n${err.errors.map((e) => `  ${e.path}: ${e.message}`).join('\n')}\n`);
			return 1;
		}
		if (err instanceof EngineError) {
			process.stderr.write(`${err.message}\n`);
			return 1;
		}
		throw err;
	}
}

// Set the exit code and let Node end by itself: process.exit() would drop whatever a pipe has not yet
// taken of a large --json output (writes to a pipe are asynchronous).
main(process.argv.slice(2)).then(
	(code) => {
		process.exitCode = code;
	},
	(err) => {
		process.stderr.write(`internal error: ${(err as Error).stack ?? err}\n`);
		process.exitCode = 1;
	}
);
