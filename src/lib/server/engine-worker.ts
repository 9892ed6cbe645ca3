/**
 * The engine's side of the worker-thread pool (engine-pool.ts): one named export per task, each taking plain data
 * and returning plain data. It runs in a worker thread, never on the web server's event loop.
 * Relative imports only and nothing from SvelteKit: the production build bundles this file on its own
 * (build/engine-worker.js, see vite.config.ts), and in development it runs from source through tsx.
 * Engine refusals travel back as { engineError } because an Error loses its class between threads.
 * Large results cross as JSON text (one string copy) instead of a structured clone of thousands of objects;
 * hashing (RFC 8785 + SHA-256, seconds for 20,000 cycles) happens here too.
 */
import type { MessagePort } from 'node:worker_threads';
import { auditScheme, EngineError, ENGINE_VERSION, withConditions, type Audit, type AuditOptions, type Scheme, type Verdict } from '../engine/index';
import { auditHash, canonicalJson, sha256Hex } from './canonical';
import { stallForceOrNull, treesInto, velocitySweep, type SweepPoint } from './audit-curves';

export type Conditions = { temperatureK?: number; forcePN?: number; concentrationsM?: Record<string, number> };
export type Refusal = { engineError: string };
export type Progress = { fraction: number; stage: string };

function refusing<T>(run: () => T): T | Refusal {
	try {
		return run();
	} catch (err) {
		if (err instanceof EngineError) return { engineError: err.message };
		throw err;
	}
}

function report(port: MessagePort | undefined, fraction: number, stage: string) {
	port?.postMessage({ fraction, stage } satisfies Progress);
}

export interface AuditOutcome {
	inputs: Scheme;
	resultsJson: string;
	sha256: string;
	engineVersion: string;
	verdictCounts: Record<Verdict, number>;
	cycleCount: number;
}

/** The full audit at the given conditions, its JSON text and its content hash: what an audit row stores. */
export function audit(task: { scheme: Scheme; conditions?: Conditions; progress?: MessagePort }): AuditOutcome | Refusal {
	return refusing(() => {
		report(task.progress, 0.05, 'steady state, cycles and fluxes');
		const inputs = withConditions(task.scheme, task.conditions ?? {});
		const results = auditScheme(inputs);
		report(task.progress, 0.55, 'content hash');
		const sha256 = auditHash({ inputs, results, engineVersion: ENGINE_VERSION });
		report(task.progress, 0.9, 'writing the results');
		const resultsJson = JSON.stringify(results);
		return { inputs, resultsJson, sha256, engineVersion: ENGINE_VERSION, verdictCounts: results.verdictCounts, cycleCount: results.cycleCount };
	});
}

/** The audit without storing anything (the live conditions panel), as an object or as JSON text for the API. */
export function preview(task: {
	scheme: Scheme;
	conditions?: Conditions;
	asJson?: boolean;
	options?: Partial<AuditOptions>;
}): { results?: Audit; resultsJson?: string } | Refusal {
	return refusing(() => {
		const results = auditScheme(withConditions(task.scheme, task.conditions ?? {}), task.options);
		return task.asJson ? { resultsJson: JSON.stringify(results) } : { results };
	});
}

/** Velocity at evenly spaced loads or log-spaced concentrations, reporting each finished point. */
export function sweep(task: {
	scheme: Scheme;
	variable: string;
	from: number;
	to: number;
	points: number;
	progress?: MessagePort;
}): { points: SweepPoint[]; stallForcePN: number | null } | Refusal {
	return refusing(() => {
		const every = Math.max(1, Math.floor(task.points / 50));
		const points = velocitySweep(task.scheme, task.variable, task.from, task.to, task.points, (done, total) => {
			if (done % every === 0) report(task.progress, (0.9 * done) / total, `velocity at point ${done} of ${total}`);
		});
		report(task.progress, 0.92, 'stall force');
		return { points, stallForcePN: stallForceOrNull(task.scheme) };
	});
}

export function stallForce(task: { scheme: Scheme }): { stallForcePN: number | null } {
	return { stallForcePN: stallForceOrNull(task.scheme) };
}

export function trees(task: { scheme: Scheme; stateId: string }) {
	return refusing(() => treesInto(task.scheme, task.stateId));
}

/** Recomputes an audit's content hash from its stored JSON text (read as text, so the web server never parses it). */
export function rehash(task: { inputsJson: string; resultsJson: string; engineVersion: string }): { sha256: string } {
	return { sha256: auditHash({ inputs: JSON.parse(task.inputsJson), results: JSON.parse(task.resultsJson), engineVersion: task.engineVersion }) };
}

/** The cache key of engine work: SHA-256 of the canonical inputs, options and engine version (equal keys, equal results). */
export function cacheKey(task: { kind: string; scheme: Scheme; conditions?: Conditions; options?: Record<string, unknown> }): { key: string; inputs: Scheme } {
	const inputs = withConditions(task.scheme, task.conditions ?? {});
	return { key: sha256Hex(canonicalJson({ kind: task.kind, inputs, options: task.options ?? {}, engineVersion: ENGINE_VERSION })), inputs };
}
