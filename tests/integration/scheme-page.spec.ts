/**
 * The scheme page of a 5,000-step scheme loads in a bounded size (it filled the heap to 4 GB and crashed the server:
 * every step's from/to menu listed every state, and the page data carried every enumerated cycle). The page data
 * keeps only the notable cycles, the step table shows one page of rows with the state choices built once, and the
 * diagram says it is too large instead of drawing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { render } from 'svelte/server';
import { makeLab } from './db';
import { createScheme } from '../../src/lib/server/schemes';
import { stopJobs } from '../../src/lib/server/jobs';
import { completeScheme, randomScheme } from '../../src/lib/engine/random-scheme';
import { NOTABLE_CYCLES } from '../../src/lib/audit-cycles';
import { DIAGRAM_LIMITS } from '../../src/lib/components/diagram-layout';
import SchemeTables from '../../src/routes/(app)/labs/[lab]/schemes/SchemeTables.svelte';
import SchemeDiagram from '../../src/lib/components/SchemeDiagram.svelte';
import SteadyStateTables from '../../src/routes/(app)/labs/[lab]/audits/[audit]/SteadyStateTables.svelte';
import { draftOf } from '../../src/routes/(app)/labs/[lab]/schemes/scheme-draft';
import { load } from '../../src/routes/(app)/labs/[lab]/schemes/[scheme]/+page.server';

const STATES = 2500;
const STEPS = 5000;
const big = randomScheme({ states: STATES, steps: STEPS, seed: 11 });
let home: Awaited<ReturnType<typeof makeLab>>;
let schemeId: string;

const count = (text: string, needle: string) => text.split(needle).length - 1;

/** The scheme page's load, called as SvelteKit calls it for the signed-in modeller. */
async function pageData(id: string) {
	const m = home.people.modeller;
	const event = {
		locals: { user: { id: m.id, email: m.email, name: m.name }, via: 'session' },
		params: { lab: home.lab.slug, scheme: id },
		url: new URL(`http://127.0.0.1/labs/${home.lab.slug}/schemes/${id}`)
	};
	return (await load(event as never)) as Exclude<Awaited<ReturnType<typeof load>>, void>;
}

beforeAll(async () => {
	home = await makeLab(['modeller']);
	const m = home.people.modeller;
	const created = await createScheme({ lab: home.lab, role: 'modeller', user: { id: m.id, email: m.email, name: m.name } }, { scheme: { ...big, name: 'Kestrel lattice, 5,000 steps' } });
	schemeId = created.scheme.id;
});
afterAll(async () => {
	await stopJobs();
});

describe('scheme page of a 5,000-step scheme', () => {
	it('loads without auditing it on every visit, in page data that grows with states + steps only [der]', async () => {
		const data = await pageData(schemeId);
		expect(data.preview).toBeNull();
		expect(data.previewSkipped).toMatch(/2,500 states and 5,000 steps; live results are computed on opening only up to/);
		expect(data.revisionCount).toBe(1);
		expect([data.auditCount, data.audits.length]).toEqual([0, 0]);
		// the revision document, some 200 bytes a step, and nothing per state × step
		expect(JSON.stringify(data).length).toBeLessThan(400 * STEPS);
	});

	it('sends the notable cycles of a live preview, not all of them [pub]', async () => {
		const m = home.people.modeller;
		const k5 = await createScheme(
			{ lab: home.lab, role: 'modeller', user: { id: m.id, email: m.email, name: m.name } },
			{ scheme: { ...completeScheme(5), name: 'Kestrel five-state complete scheme' } }
		);
		const preview = (await pageData(k5.scheme.id)).preview!;
		// K5 has 37 simple cycles (OEIS A002807); unit rates make every one consistent, so no violation cover is added
		expect(preview.cycleCount).toBe(37);
		expect(preview.cycles).toHaveLength(NOTABLE_CYCLES);
		expect(preview.cycleAffinitiesKT).toHaveLength(NOTABLE_CYCLES);
		expect(preview.states).toHaveLength(5);
	});

	it('renders one page of steps with the state ids listed once, not once per cell [der]', () => {
		const { body } = render(SchemeTables, { props: { draft: draftOf(big), errors: [] } });
		expect(count(body, 'data-path="steps[')).toBeLessThanOrEqual(100 * 11);
		expect(body).toContain('data-path="steps[99].from"');
		expect(body).not.toContain('data-path="steps[100].from"');
		expect(body).toMatch(/Steps 1–100 of 5,000/);
		// one datalist of all state ids instead of a menu of 2,500 states in each of 10,000 cells
		expect(count(body, '<option')).toBe(STATES);
		expect(body.length).toBeLessThan(2_000_000);
	});

	it('draws no diagram past the diagram limits and says why [der]', () => {
		expect(STATES).toBeGreaterThan(DIAGRAM_LIMITS.states);
		const { body } = render(SchemeDiagram, { props: { scheme: big } });
		expect(body).toContain('data-testid="diagram-too-large"');
		expect(body).toMatch(/2,500 states and 5,000 steps are more than a diagram can draw/);
		expect(body).not.toContain('<svg');
	});

	it('draws the first 200 state and step rows of an audit of it, the rest on request [der]', () => {
		const results = {
			states: big.states.map((st) => ({ id: st.id, probability: 1 / STATES, probabilityLog10: -Math.log10(STATES) })),
			steps: big.steps.map((st) => ({ id: st.id, forwardRate: st.kForward, backwardRate: st.kBackward, netFlux: 0 }))
		};
		const { body } = render(SteadyStateTables, { props: { results: results as never, scheme: big } });
		expect(count(body, '<tr>')).toBe(2 + 200 + 200);
		expect(body).toMatch(/Show 200 more \(200 of 2,500 shown\)/);
		expect(body).toMatch(/Show 200 more \(200 of 5,000 shown\)/);
	});
});
