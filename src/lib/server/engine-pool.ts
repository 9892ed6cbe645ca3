/**
 * The only door from a request to the engine: a pool of worker threads (piscina) running engine-worker.ts, so that
 * an audit of thousands of cycles never holds up the event loop that answers everyone else. Each task is plain data
 * in, plain data out; engine refusals come back as EngineError, a full queue as EngineBusyError (answered 503).
 *
 * The work budget: an estimate of a task's cost from the scheme's size, decided before anything runs. Work within
 * the budget runs here while the request waits; past it, the route hands it to the job queue (jobs/) and the page
 * shows it running. Set ENGINE_WORK_BUDGET to move the line (tests use a small one), ENGINE_THREADS for the pool size.
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { MessageChannel, receiveMessageOnPort } from 'node:worker_threads';
import { Piscina } from 'piscina';
import { CYCLE_DEFAULTS, EngineError, type Scheme } from '../engine';
import type * as Tasks from './engine-worker';

/** Work units: roughly the multiply–adds of an audit or sweep, see auditWork and sweepWork. About 0.2 s of work. */
export const DEFAULT_WORK_BUDGET = 4e7;

export function workBudget(): number {
	const set = Number(process.env.ENGINE_WORK_BUDGET);
	return Number.isFinite(set) && set > 0 ? set : DEFAULT_WORK_BUDGET;
}

/**
 * An audit's cost before it runs: the steady state (n³) plus, per enumerated cycle, its judgement, fluxes, hash and
 * storage (~200·n). The number of simple cycles is bounded by 2^(m − n + 1) (every cycle is a sum of basis cycles)
 * and by the enumeration cap.
 */
export function auditWork(scheme: Pick<Scheme, 'states' | 'steps'>): number {
	const n = scheme.states.length;
	const independent = Math.max(0, scheme.steps.length - n + 1);
	const cycles = Math.min(2 ** Math.min(independent, 60), CYCLE_DEFAULTS.maxCycles);
	return n ** 3 + cycles * n * 200;
}

/** A sweep's cost: one steady state (n³, twice over for the velocity's linear algebra) per point. */
export function sweepWork(scheme: Pick<Scheme, 'states'>, points: number): number {
	return 2 * points * scheme.states.length ** 3;
}

export const overBudget = (work: number) => work > workBudget();

/** The pool's queue is full: the server is at capacity for engine work. */
export class EngineBusyError extends Error {
	constructor() {
		super('engine-pool: every engine thread is busy and the queue is full; try again in a few seconds.');
		this.name = 'EngineBusyError';
	}
}

/** The worker file: the TypeScript source beside this module in development, build/engine-worker.js in a build. */
function workerFile(): string {
	const override = process.env.ESCAPEMENT_ENGINE_WORKER;
	if (override) return override;
	const here = fileURLToPath(import.meta.url);
	if (here.endsWith('.ts')) return join(dirname(here), 'engine-worker-dev.mjs');
	// Built: this module sits in a chunk somewhere under build/; the worker bundle sits at build/engine-worker.js.
	for (let dir = dirname(here); dir !== dirname(dir); dir = dirname(dir)) {
		const candidate = join(dir, 'engine-worker.js');
		if (existsSync(candidate)) return candidate;
	}
	throw new Error(`engine-pool: engine-worker.js not found above ${here}; rebuild the app (npm run build) or set ESCAPEMENT_ENGINE_WORKER.`);
}

let pool: Piscina | undefined;

function threads(): number {
	const set = Number(process.env.ENGINE_THREADS);
	return Number.isInteger(set) && set > 0 ? set : Math.max(1, Math.min(4, availableParallelism()));
}

function getPool(): Piscina {
	if (!pool) {
		const maxThreads = threads();
		pool = new Piscina({ filename: workerFile(), minThreads: 1, maxThreads, idleTimeout: 60_000, maxQueue: maxThreads * 16 });
	}
	return pool;
}

type TaskName = 'audit' | 'preview' | 'sweep' | 'stallForce' | 'trees' | 'rehash' | 'cacheKey';
type TaskOf<N extends TaskName> = Omit<Parameters<(typeof Tasks)[N]>[0], 'progress'>;
type ResultOf<N extends TaskName> = Exclude<ReturnType<(typeof Tasks)[N]>, Tasks.Refusal>;

export interface RunOptions {
	signal?: AbortSignal;
	/** called with the task's own account of its progress (fraction 0…1 and the stage it is in) */
	onProgress?: (p: Tasks.Progress) => void;
}

/** Runs one engine task in the pool. */
export async function runEngine<N extends TaskName>(name: N, task: TaskOf<N>, options: RunOptions = {}): Promise<ResultOf<N>> {
	const p = getPool();
	let channel: MessageChannel | undefined;
	let payload: Record<string, unknown> = task as Record<string, unknown>;
	if (options.onProgress) {
		channel = new MessageChannel();
		channel.port1.on('message', options.onProgress);
		payload = { ...payload, progress: channel.port2 };
	}
	try {
		const result = await p.run(payload, { name, signal: options.signal, transferList: channel ? [channel.port2] : undefined });
		if (result && typeof result === 'object' && 'engineError' in result) {
			const refusal = new EngineError('engine', '');
			refusal.message = (result as Tasks.Refusal).engineError;
			throw refusal;
		}
		return result as ResultOf<N>;
	} catch (err) {
		if (err instanceof Error && /queue is at limit/i.test(err.message)) throw new EngineBusyError();
		throw err;
	} finally {
		if (channel) {
			// reports posted just before the result may still sit in the port's queue: deliver them, then close
			for (let m = receiveMessageOnPort(channel.port1); m; m = receiveMessageOnPort(channel.port1)) options.onProgress?.(m.message);
			channel.port1.close();
		}
	}
}

/** Threads and queue, for the health route and the bench. */
export function enginePoolStats() {
	return pool ? { threads: pool.threads.length, queued: pool.queueSize, completed: pool.completed } : { threads: 0, queued: 0, completed: 0 };
}

export async function closeEnginePool(): Promise<void> {
	const p = pool;
	pool = undefined;
	await p?.close({ force: true });
}
