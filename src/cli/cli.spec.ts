import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { PACER_STEPPER_MISFIT } from '../lib/engine/examples';
import { freeEnergyScheme } from '../lib/engine/random-scheme';

const dir = mkdtempSync(join(tmpdir(), 'escapement-cli-'));
const run = (...args: string[]) =>
	spawnSync(process.execPath, ['--import', 'tsx', 'src/cli/index.ts', ...args], { encoding: 'utf8', cwd: process.cwd(), timeout: 60_000 });

// each test starts the command cold (tsx compiles it), which is slow when the machine is busy
describe('escapement audit (CLI)', { timeout: 120_000 }, () => {
	const good = join(dir, 'pacer.json');
	writeFileSync(good, JSON.stringify(PACER_STEPPER_MISFIT));

	it('prints the audit JSON with --json', () => {
		const r = run('audit', good, '--json');
		expect(r.status).toBe(0);
		const audit = JSON.parse(r.stdout);
		expect(audit.format).toBe('escapement.audit/1');
		expect(audit.cycles[0].verdict).toBe('violation');
		expect(audit.cycles[0].deviationLog10).toBeCloseTo(-1, 10);
	});

	it('prints a readable summary without --json', () => {
		const r = run('audit', good);
		expect(r.status).toBe(0);
		expect(r.stdout).toMatch(/Verdicts: 0 consistent, 1 violation/);
		expect(r.stdout).toMatch(/Worst cycles/);
		expect(r.stdout).toMatch(/velocity\s+[\d.]+ nm\/s/);
		expect(r.stdout).toMatch(/stall force\s+[\d.]+ pN/);
		expect(r.stdout).toMatch(/Proposed correction/);
		expect(r.stdout).toMatch(/Consistency decided for every cycle: every simple cycle \(1\) was enumerated and judged/);
	});

	it('reports scheme errors with JSON paths on stderr and exits non-zero', () => {
		const bad = join(dir, 'bad.json');
		writeFileSync(bad, JSON.stringify({ states: [{ id: 'A' }], steps: [{ id: 'x', from: 'A', to: 'B', kForward: -1, kBackward: 1 }] }));
		const r = run('audit', bad, '--json');
		expect(r.status).toBe(1);
		expect(r.stdout).toBe('');
		expect(r.stderr).toMatch(/steps\[0\]\.kForward/);
		expect(r.stderr).toMatch(/steps\[0\]\.to: unknown state "B"/);
		const missing = run('audit', join(dir, 'nope.json'));
		expect(missing.status).toBe(1);
		expect(missing.stderr).toMatch(/ENOENT/);
		expect(run('frobnicate').status).toBe(2);
	});

	it('regression, JSON cut at 128 KiB when piped: writes all of a large audit through a slow pipe before exiting', async () => {
		const big = join(dir, 'big.json');
		writeFileSync(big, JSON.stringify(freeEnergyScheme({ states: 12, steps: 30, seed: 3 })));
		const child = spawn(process.execPath, ['--import', 'tsx', 'src/cli/index.ts', 'audit', big, '--json', '--max-cycles', '1500'], {
			cwd: process.cwd(),
			stdio: ['ignore', 'pipe', 'pipe']
		});
		const chunks: Buffer[] = [];
		let stderr = '';
		child.stderr.on('data', (c: Buffer) => (stderr += c));
		const exited = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
		// A slow reader: after the first chunk, stop reading until the command exits or a second has passed, so that
		// the rest of its output waits in its own queue, where an early process.exit() would drop it.
		await new Promise<void>((resolve) =>
			child.stdout.once('data', (c: Buffer) => {
				chunks.push(c);
				child.stdout.pause();
				resolve();
			})
		);
		await Promise.race([new Promise((r) => child.once('exit', r)), new Promise((r) => setTimeout(r, 1000))]);
		child.stdout.on('data', (c: Buffer) => chunks.push(c));
		child.stdout.resume();
		const code = await exited;
		const text = Buffer.concat(chunks).toString('utf8');
		expect(stderr).toBe('');
		expect(code).toBe(0);
		expect(text.length).toBeGreaterThan(1_000_000); // well past the 64 KiB pipe buffer and the 128 KiB cut seen [der]
		const audit = JSON.parse(text);
		expect(audit.cycleCount).toBe(1500);
		expect(audit.cycles).toHaveLength(1500);
	});
});
