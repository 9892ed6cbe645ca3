import { describe, expect, it } from 'vitest';
import { arcGeometry, ellipsis, fluxWidth, FLUX_WIDTH, layoutScheme, NODE_RADIUS, parallelOffsets, placeStateLabels, placeStepLabels, ringOrder, type Box, type LayoutInput } from './diagram-layout';
import { compositeWithViolation, stepperWithFutileBranch, threeSiteRotary } from '$lib/server/demo/schemes';

/** An invented six-state motor with a futile branch and two pairs of parallel steps (one pair written in opposite directions). */
const MOTOR: LayoutInput = {
	states: ['K0', 'K1', 'K2', 'K3', 'K4', 'K5'].map((id) => ({ id })),
	steps: [
		{ id: 'a', from: 'K0', to: 'K1' },
		{ id: 'b', from: 'K1', to: 'K2' },
		{ id: 'c', from: 'K2', to: 'K3' },
		{ id: 'd', from: 'K3', to: 'K0' },
		{ id: 'e', from: 'K1', to: 'K3' },
		{ id: 'e2', from: 'K1', to: 'K3' },
		{ id: 'f', from: 'K3', to: 'K4' },
		{ id: 'g', from: 'K4', to: 'K5' },
		{ id: 'g-back', from: 'K5', to: 'K4' },
		{ id: 'g3', from: 'K4', to: 'K5' }
	]
};

/** The point halfway along a quadratic Bézier by de Casteljau's construction, read from the SVG path text. */
function bezierMidpoint(d: string): { x: number; y: number } {
	const n = d.match(/-?\d+(\.\d+)?/g)!.map(Number);
	if (n.length === 4) return { x: (n[0] + n[2]) / 2, y: (n[1] + n[3]) / 2 };
	const [x0, y0, cx, cy, x1, y1] = n;
	const p = { x: (x0 + cx) / 2, y: (y0 + cy) / 2 };
	const q = { x: (cx + x1) / 2, y: (cy + y1) / 2 };
	return { x: (p.x + q.x) / 2, y: (p.y + q.y) / 2 };
}

describe('parallelOffsets', () => {
	it('gives steps between the same two states distinct offsets, symmetric about the straight line', () => {
		const offsets = parallelOffsets(MOTOR.steps, 30);
		expect(offsets.get('a')).toBe(0);
		expect(offsets.get('e')).not.toBe(offsets.get('e2'));
		expect((offsets.get('e') ?? NaN) + (offsets.get('e2') ?? NaN)).toBe(0);
		// Three steps between K4 and K5, one written K5 → K4: measured in the pair's own orientation they must all differ.
		const canonical = ['g', 'g-back', 'g3'].map((id) => {
			const step = MOTOR.steps.find((s) => s.id === id)!;
			return (step.from < step.to ? 1 : -1) * offsets.get(id)!;
		});
		expect(new Set(canonical).size).toBe(3);
		expect(canonical.reduce((a, b) => a + b, 0)).toBeCloseTo(0, 12);
	});
});

describe('arcGeometry', () => {
	it('puts the midpoint where the drawn curve actually passes, offset along the normal', () => {
		const a = { x: -40, y: 10 };
		const b = { x: 80, y: 70 };
		for (const offset of [0, 25, -36]) {
			const arc = arcGeometry(a, b, offset);
			const drawn = bezierMidpoint(arc.d);
			expect(drawn.x).toBeCloseTo(arc.mid.x, 1);
			expect(drawn.y).toBeCloseTo(arc.mid.y, 1);
			const chordMid = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 };
			expect(Math.hypot(arc.mid.x - chordMid.x, arc.mid.y - chordMid.y)).toBeCloseTo(Math.abs(offset), 6);
			expect(Math.hypot(arc.tangent.x, arc.tangent.y)).toBeCloseTo(1, 12);
			expect(arc.tangent.x * arc.normal.x + arc.tangent.y * arc.normal.y).toBeCloseTo(0, 12);
		}
	});

	it('draws two parallel steps written in opposite directions on opposite sides', () => {
		const offsets = parallelOffsets([
			{ id: 'p', from: 'A', to: 'B' },
			{ id: 'q', from: 'B', to: 'A' }
		]);
		const A = { x: 0, y: 0 };
		const B = { x: 100, y: 0 };
		const p = arcGeometry(A, B, offsets.get('p')!);
		const q = arcGeometry(B, A, offsets.get('q')!);
		expect(Math.sign(p.mid.y)).not.toBe(Math.sign(q.mid.y));
		expect(p.mid.y).not.toBe(0);
	});
});

describe('layoutScheme', () => {
	it('places every state at a finite position, apart from the others', () => {
		const layout = layoutScheme(MOTOR);
		expect(layout.nodes).toHaveLength(6);
		for (const n of layout.nodes) {
			expect(Number.isFinite(n.x)).toBe(true);
			expect(Number.isFinite(n.y)).toBe(true);
		}
		let closest = Infinity;
		for (let i = 0; i < layout.nodes.length; i++)
			for (let j = i + 1; j < layout.nodes.length; j++)
				closest = Math.min(closest, Math.hypot(layout.nodes[i].x - layout.nodes[j].x, layout.nodes[i].y - layout.nodes[j].y));
		// Node circles have radius 22 in the drawing: centres must be well over a diameter apart.
		expect(closest).toBeGreaterThan(60);
		for (const n of layout.nodes) {
			expect(n.x).toBeGreaterThan(layout.bounds.x);
			expect(n.x).toBeLessThan(layout.bounds.x + layout.bounds.width);
		}
	});

	it('is deterministic: the same scheme gives the same picture', () => {
		const first = layoutScheme(MOTOR);
		const again = layoutScheme(structuredClone(MOTOR));
		expect(again.nodes).toEqual(first.nodes);
		expect(again.edges).toEqual(first.edges);
	});

	it('keeps pinned states where they were put', () => {
		const layout = layoutScheme(MOTOR, { pinned: { K2: { x: 500, y: -300 } } });
		const k2 = layout.nodes.find((n) => n.id === 'K2')!;
		expect(k2).toMatchObject({ x: 500, y: -300, pinned: true });
		expect(layout.nodes.filter((n) => n.pinned)).toHaveLength(1);
	});

	it('copes with a single state and with a step to an unknown state', () => {
		const lone = layoutScheme({ states: [{ id: 'Z' }], steps: [{ id: 'x', from: 'Z', to: 'nowhere' }] });
		expect(lone.nodes).toHaveLength(1);
		expect(Number.isFinite(lone.nodes[0].x) && Number.isFinite(lone.bounds.width)).toBe(true);
	});
});

describe('fluxWidth', () => {
	it('grows with |flux| on a log scale and hides zero fluxes', () => {
		const fluxes = [1e-3, -1e-1, 10];
		const w = fluxes.map((j) => fluxWidth(j, fluxes));
		expect(w[0]).toBeCloseTo(FLUX_WIDTH.min, 12);
		expect(w[2]).toBeCloseTo(FLUX_WIDTH.max, 12);
		// 1e-1 lies halfway between 1e-3 and 10 in decades (2 of 4).
		expect(w[1]).toBeCloseTo((FLUX_WIDTH.min + FLUX_WIDTH.max) / 2, 12);
		expect(fluxWidth(0, fluxes)).toBe(0);
	});
});

const DEMOS = [stepperWithFutileBranch(), threeSiteRotary(), compositeWithViolation()];

/** Distance from a point to the nearest point of a box (0 inside), written out here rather than taken from the module. */
function distanceToBox(p: { x: number; y: number }, b: Box): number {
	const dx = Math.max(b.x - p.x, 0, p.x - (b.x + b.width));
	const dy = Math.max(b.y - p.y, 0, p.y - (b.y + b.height));
	return Math.hypot(dx, dy);
}
const overlap = (a: Box, b: Box) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;

/** Whether segments p1p2 and p3p4 cross at a point inside both (orientation test). */
function segmentsCross(p1: { x: number; y: number }, p2: { x: number; y: number }, p3: { x: number; y: number }, p4: { x: number; y: number }): boolean {
	const o = (a: typeof p1, b: typeof p1, c: typeof p1) => Math.sign((b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x));
	return o(p1, p2, p3) * o(p1, p2, p4) < 0 && o(p3, p4, p1) * o(p3, p4, p2) < 0;
}

function labelled(scheme: (typeof DEMOS)[number]) {
	const layout = layoutScheme(scheme);
	const at = new Map(layout.nodes.map((n) => [n.id, n]));
	const states = placeStateLabels(layout.nodes, new Map(scheme.states.map((s) => [s.id, s.label ?? ''])));
	const steps = placeStepLabels(
		layout.edges.map((e) => ({ stepId: e.stepId, a: at.get(e.from)!, b: at.get(e.to)!, offset: e.offset, width: 4 })),
		layout.nodes,
		{ avoid: states.map((l) => l.box) }
	);
	return { layout, at, states, steps };
}

describe('label placement on the demo schemes', () => {
	for (const scheme of DEMOS) {
		it(`keeps every step id off every state circle and off the other ids: ${scheme.name}`, () => {
			const { layout, steps } = labelled(scheme);
			expect(steps).toHaveLength(scheme.steps.length);
			for (const l of steps) {
				// The box is as wide as its text at the drawing's font (monospace, 11 px: at least 6 px a character).
				expect(l.box.width).toBeGreaterThanOrEqual(Array.from(l.text).length * 6);
				for (const n of layout.nodes) expect(distanceToBox(n, l.box), `step "${l.stepId}" over state ${n.id}`).toBeGreaterThanOrEqual(NODE_RADIUS);
			}
			for (let i = 0; i < steps.length; i++)
				for (let j = i + 1; j < steps.length; j++) expect(overlap(steps[i].box, steps[j].box), `"${steps[i].stepId}" on "${steps[j].stepId}"`).toBe(false);
		});

		it(`writes state labels off the circles, outside the middle, without crossing steps between other states: ${scheme.name}`, () => {
			const { layout, states, at } = labelled(scheme);
			const cx = layout.nodes.reduce((a, n) => a + n.x, 0) / layout.nodes.length;
			const cy = layout.nodes.reduce((a, n) => a + n.y, 0) / layout.nodes.length;
			for (const l of states) {
				const n = at.get(l.id)!;
				for (const m of layout.nodes) expect(distanceToBox(m, l.box), `label of ${l.id} over state ${m.id}`).toBeGreaterThanOrEqual(NODE_RADIUS);
				// The label's centre lies farther from the middle than its state.
				const lc = { x: l.box.x + l.box.width / 2, y: l.box.y + l.box.height / 2 };
				expect(Math.hypot(lc.x - cx, lc.y - cy)).toBeGreaterThan(Math.hypot(n.x - cx, n.y - cy));
			}
		});

		it(`starts from, and keeps, a drawing whose straight steps do not cross: ${scheme.name}`, () => {
			const { at } = labelled(scheme);
			let crossings = 0;
			for (const s of scheme.steps)
				for (const t of scheme.steps) {
					if (s.id >= t.id || [s.from, s.to].some((v) => v === t.from || v === t.to)) continue;
					if (segmentsCross(at.get(s.from)!, at.get(s.to)!, at.get(t.from)!, at.get(t.to)!)) crossings++;
				}
			expect(crossings).toBe(0);
		});
	}

	it('orders the ring along the longest cycle, slotting a branch in beside the steps it bypasses', () => {
		const order = ringOrder(stepperWithFutileBranch());
		expect(order).toHaveLength(6);
		const i = (id: string) => order.indexOf(id);
		const adjacentOnRing = (p: string, q: string) => [1, order.length - 1].includes(Math.abs(i(p) - i(q)));
		// Main cycle E → T → S → DP → D → E stays in order round the ring; X (the futile branch T → X → E) sits between T and E.
		for (const [p, q] of [['T', 'S'], ['S', 'DP'], ['DP', 'D'], ['X', 'T'], ['X', 'E']]) expect(adjacentOnRing(p, q), `${p}–${q}`).toBe(true);
	});

	it('shortens long labels with an ellipsis and leaves short ones alone', () => {
		expect(ellipsis('ATP hydrolysed before docking (futile)', 24)).toBe('ATP hydrolysed before d…');
		expect(Array.from(ellipsis('ATP hydrolysed before docking (futile)', 24))).toHaveLength(24);
		expect(ellipsis('front head ATP', 24)).toBe('front head ATP');
	});
});
