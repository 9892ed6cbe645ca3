/**
 * Layout maths of the scheme diagram: node positions from a d3-force simulation run to convergence synchronously
 * (so the same scheme always gets the same picture), the curvature that bows parallel steps apart, the geometry of
 * each step's arc (path, midpoint, tangent, normal), the log scale of flux arrows and the fit of the view.
 *
 * Pure and deterministic: d3-force places nodes without a position on a phyllotaxis spiral and draws its jiggle
 * from a fixed-seed generator. Cost: O(ticks · n²) for the many-body force at the sizes drawn here (≤ a few hundred
 * states). Invariants: every returned coordinate is finite; steps between the same two states get distinct offsets,
 * symmetric about the straight line.
 */
import { forceCenter, forceCollide, forceLink, forceManyBody, forceSimulation, forceX, forceY, type SimulationNodeDatum } from 'd3-force';

export const LAYOUT_DEFAULTS = {
	/** preferred length of a step, in layout units */
	linkDistance: 160,
	/** many-body repulsion (negative repels) */
	charge: -850,
	/** no two state centres closer than twice this */
	collideRadius: 52,
	ticks: 300,
	/** distance between the midpoints of neighbouring parallel arcs */
	parallelSpacing: 36
};
export type LayoutOptions = typeof LAYOUT_DEFAULTS;

export interface Point {
	x: number;
	y: number;
}
export interface LayoutInput {
	states: { id: string; label?: string }[];
	steps: { id: string; from: string; to: string }[];
}
export interface LayoutNode extends Point {
	id: string;
	pinned: boolean;
}
export interface LayoutEdge {
	stepId: string;
	from: string;
	to: string;
	/** signed distance of the arc's midpoint from the straight line from → to (0: straight) */
	offset: number;
}
export interface Bounds {
	x: number;
	y: number;
	width: number;
	height: number;
}
export interface DiagramLayout {
	nodes: LayoutNode[];
	edges: LayoutEdge[];
	bounds: Bounds;
}

/**
 * Offsets that bow parallel steps apart. Steps joining the same pair of states (in either direction) are spread
 * symmetrically about the straight line; the sign is taken in the pair's own orientation, so A→B and B→A steps
 * between the same states still fall on different sides.
 */
export function parallelOffsets(steps: LayoutInput['steps'], spacing = LAYOUT_DEFAULTS.parallelSpacing): Map<string, number> {
	const groups = new Map<string, LayoutInput['steps']>();
	for (const step of steps) {
		const key = step.from < step.to ? `${step.from}\u0000${step.to}` : `${step.to}\u0000${step.from}`;
		const group = groups.get(key);
		if (group) group.push(step);
		else groups.set(key, [step]);
	}
	const offsets = new Map<string, number>();
	for (const group of groups.values()) {
		group.forEach((step, i) => {
			const canonical = (i - (group.length - 1) / 2) * spacing;
			offsets.set(step.id, step.from < step.to ? canonical : -canonical);
		});
	}
	return offsets;
}

export function layoutScheme(input: LayoutInput, options: Partial<LayoutOptions> & { pinned?: Record<string, Point> } = {}): DiagramLayout {
	const o = { ...LAYOUT_DEFAULTS, ...options };
	const pinned = options.pinned ?? {};
	type SimNode = SimulationNodeDatum & { id: string };
	const nodes: SimNode[] = input.states.map((s) => {
		const pin = pinned[s.id];
		return pin && Number.isFinite(pin.x) && Number.isFinite(pin.y) ? { id: s.id, x: pin.x, y: pin.y, fx: pin.x, fy: pin.y } : { id: s.id };
	});
	const known = new Set(nodes.map((n) => n.id));
	const links = input.steps.filter((s) => known.has(s.from) && known.has(s.to) && s.from !== s.to).map((s) => ({ source: s.from, target: s.to }));

	const simulation = forceSimulation<SimNode>(nodes)
		.force('link', forceLink<SimNode, { source: string; target: string }>(links).id((d) => d.id).distance(o.linkDistance).strength(0.7))
		.force('charge', forceManyBody<SimNode>().strength(o.charge))
		.force('collide', forceCollide<SimNode>(o.collideRadius).iterations(2))
		.force('x', forceX<SimNode>(0).strength(0.04))
		.force('y', forceY<SimNode>(0).strength(0.04))
		.force('center', forceCenter<SimNode>(0, 0))
		.stop();
	if (Object.keys(pinned).length > 0) simulation.force('center', null);
	simulation.tick(o.ticks);

	const laidOut: LayoutNode[] = nodes.map((n) => ({
		id: n.id,
		x: Number.isFinite(n.x) ? (n.x as number) : 0,
		y: Number.isFinite(n.y) ? (n.y as number) : 0,
		pinned: n.fx !== undefined && n.fx !== null
	}));
	const offsets = parallelOffsets(input.steps, o.parallelSpacing);
	const edges: LayoutEdge[] = input.steps.map((s) => ({ stepId: s.id, from: s.from, to: s.to, offset: offsets.get(s.id) ?? 0 }));
	return { nodes: laidOut, edges, bounds: boundsOf(laidOut, edges, o.collideRadius + 12) };
}

/** The box around all nodes and arc midpoints, with a margin. */
export function boundsOf(nodes: Point[], edges: LayoutEdge[] = [], margin = 60): Bounds {
	if (nodes.length === 0) return { x: -margin, y: -margin, width: 2 * margin, height: 2 * margin };
	let x0 = Infinity;
	let y0 = Infinity;
	let x1 = -Infinity;
	let y1 = -Infinity;
	for (const n of nodes) {
		x0 = Math.min(x0, n.x);
		y0 = Math.min(y0, n.y);
		x1 = Math.max(x1, n.x);
		y1 = Math.max(y1, n.y);
	}
	const extra = edges.reduce((m, e) => Math.max(m, Math.abs(e.offset)), 0);
	const pad = margin + extra;
	return { x: x0 - pad, y: y0 - pad, width: x1 - x0 + 2 * pad, height: y1 - y0 + 2 * pad };
}

export interface ArcGeometry {
	/** SVG path data from → to: a straight line, or a quadratic arc bowed by the offset */
	d: string;
	/** point of the arc halfway along */
	mid: Point;
	/** unit direction of travel from → to at the midpoint */
	tangent: Point;
	/** unit normal (tangent turned +90°); the arc bows towards +normal for a positive offset */
	normal: Point;
}

export function arcGeometry(a: Point, b: Point, offset: number): ArcGeometry {
	const dx = b.x - a.x;
	const dy = b.y - a.y;
	const length = Math.hypot(dx, dy) || 1;
	const tangent = { x: dx / length, y: dy / length };
	const normal = { x: -tangent.y, y: tangent.x };
	const centre = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 };
	const mid = { x: centre.x + normal.x * offset, y: centre.y + normal.y * offset };
	const r = (v: number) => Math.round(v * 100) / 100;
	if (offset === 0) return { d: `M${r(a.x)},${r(a.y)}L${r(b.x)},${r(b.y)}`, mid, tangent, normal };
	// A quadratic Bézier passes through centre + normal·(control offset)/2 at t = ½, so the control point sits at twice the offset.
	const control = { x: centre.x + normal.x * 2 * offset, y: centre.y + normal.y * 2 * offset };
	return { d: `M${r(a.x)},${r(a.y)}Q${r(control.x)},${r(control.y)} ${r(b.x)},${r(b.y)}`, mid, tangent, normal };
}

export const FLUX_WIDTH = { min: 1.5, max: 8, decades: 6 };

/**
 * Stroke width for a net flux on a log scale between the smallest and the largest |flux| drawn (at most `decades`
 * below the largest); 0 for a flux too small to draw.
 */
export function fluxWidth(flux: number, all: number[], scale = FLUX_WIDTH): number {
	const magnitudes = all.map(Math.abs).filter((v) => Number.isFinite(v) && v > 0);
	const abs = Math.abs(flux);
	if (!Number.isFinite(abs) || abs === 0 || magnitudes.length === 0) return 0;
	const top = Math.max(...magnitudes);
	const floor = Math.max(Math.min(...magnitudes), top * 10 ** -scale.decades);
	if (abs < floor) return 0;
	if (top === floor) return (scale.min + scale.max) / 2;
	const t = (Math.log10(abs) - Math.log10(floor)) / (Math.log10(top) - Math.log10(floor));
	return scale.min + t * (scale.max - scale.min);
}

/** Triangle (SVG points) of an arrowhead at `at`, pointing along `direction`, sized by the stroke width. */
export function arrowHead(at: Point, direction: Point, width: number): string {
	const length = 7 + width * 1.6;
	const half = 4 + width * 0.9;
	const tip = { x: at.x + direction.x * length * 0.5, y: at.y + direction.y * length * 0.5 };
	const back = { x: at.x - direction.x * length * 0.5, y: at.y - direction.y * length * 0.5 };
	const n = { x: -direction.y, y: direction.x };
	const pts = [tip, { x: back.x + n.x * half, y: back.y + n.y * half }, { x: back.x - n.x * half, y: back.y - n.y * half }];
	return pts.map((p) => `${Math.round(p.x * 100) / 100},${Math.round(p.y * 100) / 100}`).join(' ');
}
