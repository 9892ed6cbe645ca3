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

/**
 * The largest scheme the diagram draws. Past it the labels and arcs cannot be told apart on a page, and the force
 * layout (O(ticks · n log n)) and thousands of SVG elements would stall the page: the diagram says so and draws nothing.
 */
export const DIAGRAM_LIMITS = { states: 120, steps: 300 } as const;

/** Why a scheme is too large to draw, or null when it is drawn. */
export function diagramRefusal(input: { states: unknown[]; steps: unknown[] }): string | null {
	const { states, steps } = DIAGRAM_LIMITS;
	if (input.states.length <= states && input.steps.length <= steps) return null;
	return `${input.states.length.toLocaleString('en')} states and ${input.steps.length.toLocaleString('en')} steps are more than a diagram can draw legibly (up to ${states} states and ${steps} steps), so none is drawn; the tables list every state and step.`;
}


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

/**
 * The order in which states go round the starting ring: the longest cycle a depth-first search finds (the
 * scheme's main cycle, for the usual motor), then every other state slotted in between two of its neighbours that
 * are already next to each other on the ring, else beside its first placed neighbour. A branch that leaves the
 * main cycle and comes back (a futile branch) thus starts beside the steps it bypasses instead of across the
 * middle, and the force simulation starts from a drawing without needless crossings. O(n² + m).
 */
export function ringOrder(input: LayoutInput): string[] {
	const ids = input.states.map((s) => s.id);
	const known = new Set(ids);
	const adjacent = new Map<string, string[]>(ids.map((id) => [id, []]));
	for (const step of input.steps) {
		if (!known.has(step.from) || !known.has(step.to) || step.from === step.to) continue;
		adjacent.get(step.from)!.push(step.to);
		adjacent.get(step.to)!.push(step.from);
	}
	// Depth-first search (iterative), remembering each state's parent and depth; a back edge u–v closes a cycle.
	const depth = new Map<string, number>();
	const parent = new Map<string, string | null>();
	let best: { from: string; to: string; length: number } | null = null;
	for (const root of ids) {
		if (depth.has(root)) continue;
		depth.set(root, 0);
		parent.set(root, null);
		const stack: { id: string; next: number }[] = [{ id: root, next: 0 }];
		while (stack.length) {
			const top = stack[stack.length - 1];
			const neighbours = adjacent.get(top.id)!;
			if (top.next >= neighbours.length) {
				stack.pop();
				continue;
			}
			const v = neighbours[top.next++];
			if (!depth.has(v)) {
				depth.set(v, depth.get(top.id)! + 1);
				parent.set(v, top.id);
				stack.push({ id: v, next: 0 });
			} else if (v !== parent.get(top.id) && depth.get(v)! < depth.get(top.id)!) {
				const length = depth.get(top.id)! - depth.get(v)! + 1;
				if (!best || length > best.length) best = { from: top.id, to: v, length };
			}
		}
	}
	const ring: string[] = [];
	if (best) {
		for (let at: string | null | undefined = best.from; at && at !== best.to; at = parent.get(at)) ring.push(at);
		ring.push(best.to);
		ring.reverse();
	} else if (ids.length) ring.push(ids[0]);
	const placed = new Set(ring);
	let progress = true;
	while (placed.size < ids.length) {
		if (!progress) {
			// A part of the scheme not joined to the ring: start it after the ring.
			const loose = ids.find((id) => !placed.has(id))!;
			ring.push(loose);
			placed.add(loose);
		}
		progress = false;
		for (const id of ids) {
			if (placed.has(id)) continue;
			const near = adjacent.get(id)!.filter((n) => placed.has(n));
			if (!near.length) continue;
			let at = -1;
			for (let i = 0; i < ring.length && at < 0; i++) {
				const j = (i + 1) % ring.length;
				if (near.includes(ring[i]) && near.includes(ring[j]) && ring.length > 1) at = i + 1;
			}
			if (at < 0) at = ring.indexOf(near[0]) + 1;
			ring.splice(at, 0, id);
			placed.add(id);
			progress = true;
		}
	}
	return ring;
}

/** Starting positions on a circle in ringOrder, about one step length apart. */
function ringStart(input: LayoutInput, linkDistance: number): Map<string, Point> {
	const order = ringOrder(input);
	const n = order.length;
	const radius = n <= 1 ? 0 : Math.max(linkDistance / 2, (linkDistance * n) / (2 * Math.PI));
	return new Map(order.map((id, i) => [id, { x: radius * Math.cos((2 * Math.PI * i) / n - Math.PI / 2), y: radius * Math.sin((2 * Math.PI * i) / n - Math.PI / 2) }]));
}

export function layoutScheme(input: LayoutInput, options: Partial<LayoutOptions> & { pinned?: Record<string, Point> } = {}): DiagramLayout {
	const o = { ...LAYOUT_DEFAULTS, ...options };
	const pinned = options.pinned ?? {};
	type SimNode = SimulationNodeDatum & { id: string };
	const start = ringStart(input, o.linkDistance);
	const nodes: SimNode[] = input.states.map((s) => {
		const pin = pinned[s.id];
		if (pin && Number.isFinite(pin.x) && Number.isFinite(pin.y)) return { id: s.id, x: pin.x, y: pin.y, fx: pin.x, fy: pin.y };
		const p = start.get(s.id);
		return p ? { id: s.id, x: p.x, y: p.y } : { id: s.id };
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

// Labels -----------------------------------------------------------------------------------------------------------

/** Radius of a state's circle in the drawing, in layout units. */
export const NODE_RADIUS = 22;
/** Text metrics of the drawing's labels: monospace step ids at 11 px, state labels at 10.5 px (average glyph widths). */
export const LABEL_FONT = { stepCharWidth: 6.7, stepHeight: 14, stateCharWidth: 5.9, stateHeight: 13 };
export const LABEL_MAX = { stepId: 18, stateLabel: 24 };

export interface Box {
	x: number;
	y: number;
	width: number;
	height: number;
}

/** `text` cut to `max` characters with an ellipsis (the drawing gives the full text as a tooltip). */
export function ellipsis(text: string, max: number): string {
	const chars = Array.from(text);
	return chars.length > max ? `${chars.slice(0, max - 1).join('').trimEnd()}…` : text;
}

export function boxesOverlap(a: Box, b: Box, gap = 0): boolean {
	return a.x < b.x + b.width + gap && b.x < a.x + a.width + gap && a.y < b.y + b.height + gap && b.y < a.y + a.height + gap;
}

/** Whether a box comes within `radius` of a point (the circle of a state, or a badge). */
export function boxHitsCircle(box: Box, centre: Point, radius: number): boolean {
	const nx = Math.max(box.x, Math.min(centre.x, box.x + box.width));
	const ny = Math.max(box.y, Math.min(centre.y, box.y + box.height));
	return Math.hypot(nx - centre.x, ny - centre.y) < radius;
}

function centroidOf(points: Point[]): Point {
	if (!points.length) return { x: 0, y: 0 };
	return { x: points.reduce((a, p) => a + p.x, 0) / points.length, y: points.reduce((a, p) => a + p.y, 0) / points.length };
}

export interface StateLabelPlacement {
	id: string;
	text: string;
	/** anchor of the text relative to the state's centre; `anchor` as SVG text-anchor */
	dx: number;
	dy: number;
	anchor: 'start' | 'middle' | 'end';
	box: Box;
}

/**
 * Each state's label on the side of its circle facing away from the middle of the drawing (below a state in the lower
 * half, above one in the upper half, beside one far out to the left or right), shortened to LABEL_MAX.stateLabel
 * characters. The middle, where the steps of the cycles meet, stays clear.
 */
export function placeStateLabels(nodes: (Point & { id: string })[], labels: Map<string, string>): StateLabelPlacement[] {
	const centre = centroidOf(nodes);
	const out: StateLabelPlacement[] = [];
	for (const n of nodes) {
		const full = labels.get(n.id) ?? '';
		if (!full) continue;
		const text = ellipsis(full, LABEL_MAX.stateLabel);
		const width = Array.from(text).length * LABEL_FONT.stateCharWidth + 4;
		const h = LABEL_FONT.stateHeight;
		const vx = n.x - centre.x;
		const vy = n.y - centre.y;
		const gap = 5;
		let place: Omit<StateLabelPlacement, 'id' | 'text'>;
		if (nodes.length > 1 && Math.abs(vx) > 2.2 * Math.abs(vy)) {
			// Far out to one side: beside the circle, text running outwards.
			const right = vx > 0;
			const dx = right ? NODE_RADIUS + gap : -(NODE_RADIUS + gap);
			place = { dx, dy: 0, anchor: right ? 'start' : 'end', box: { x: n.x + (right ? dx : dx - width), y: n.y - h / 2, width, height: h } };
		} else {
			const below = nodes.length <= 1 || vy >= 0;
			const dy = below ? NODE_RADIUS + gap + h / 2 : -(NODE_RADIUS + gap + h / 2);
			place = { dx: 0, dy, anchor: 'middle', box: { x: n.x - width / 2, y: n.y + dy - h / 2, width, height: h } };
		}
		out.push({ id: n.id, text, ...place });
	}
	return out;
}

export interface StepLabelInput {
	stepId: string;
	a: Point;
	b: Point;
	offset: number;
	/** stroke width of the flux arrow drawn on the arc (0: none) */
	width?: number;
}
export interface StepLabelPlacement {
	stepId: string;
	text: string;
	/** centre of the text */
	x: number;
	y: number;
	box: Box;
}

function quadraticAt(a: Point, b: Point, offset: number, t: number): { p: Point; tangent: Point } {
	const { normal } = arcGeometry(a, b, offset);
	const c = { x: (a.x + b.x) / 2 + normal.x * 2 * offset, y: (a.y + b.y) / 2 + normal.y * 2 * offset };
	const u = 1 - t;
	const p = { x: u * u * a.x + 2 * u * t * c.x + t * t * b.x, y: u * u * a.y + 2 * u * t * c.y + t * t * b.y };
	const d = { x: 2 * u * (c.x - a.x) + 2 * t * (b.x - c.x), y: 2 * u * (c.y - a.y) + 2 * t * (b.y - c.y) };
	const len = Math.hypot(d.x, d.y) || 1;
	return { p, tangent: { x: d.x / len, y: d.y / len } };
}

/**
 * Where to write each step's id: beside its arc, on the side away from the middle of the drawing (for a bowed arc,
 * its outer side), clear of every state's circle, of the state labels, of badges and of the ids placed before it.
 * Candidates run along the arc (halfway first) on both sides at growing distances; each is scored (a state circle
 * is worst, then another label, then a crossing arc, then distance and the inner side) and the best kept, greedily in
 * step order. Ids are shortened to LABEL_MAX.stepId characters. Cost O(m · candidates · (n + m)).
 */
export function placeStepLabels(
	steps: StepLabelInput[],
	nodes: Point[],
	options: { avoid?: Box[]; badges?: (Point & { r: number })[]; nodeRadius?: number } = {}
): StepLabelPlacement[] {
	const radius = (options.nodeRadius ?? NODE_RADIUS) + 3;
	const avoid = options.avoid ?? [];
	const badges = options.badges ?? [];
	const centre = centroidOf(nodes);
	const placed: Box[] = [];
	// A few points along every arc, to notice a label written across another step.
	const samples = steps.length <= 150 ? steps.map((s) => [0.2, 0.35, 0.5, 0.65, 0.8].map((t) => ({ step: s.stepId, p: quadraticAt(s.a, s.b, s.offset, t).p }))).flat() : [];
	const out: StepLabelPlacement[] = [];
	for (const s of steps) {
		const text = ellipsis(s.stepId, LABEL_MAX.stepId);
		const w = Array.from(text).length * LABEL_FONT.stepCharWidth + 4;
		const h = LABEL_FONT.stepHeight;
		const arc = arcGeometry(s.a, s.b, s.offset);
		const outward = s.offset !== 0 ? Math.sign(s.offset) : Math.sign((arc.mid.x - centre.x) * arc.normal.x + (arc.mid.y - centre.y) * arc.normal.y) || 1;
		let best: { score: number; x: number; y: number; box: Box } | null = null;
		for (const t of [0.5, 0.4, 0.6, 0.3, 0.7]) {
			const { p, tangent } = quadraticAt(s.a, s.b, s.offset, t);
			const normal = { x: -tangent.y, y: tangent.x };
			// How far the box reaches in the normal's direction, so that the text clears the line and its arrow.
			const support = (Math.abs(normal.x) * w) / 2 + (Math.abs(normal.y) * h) / 2;
			for (const side of [outward, -outward]) {
				for (const extra of [0, 10, 22, 36]) {
					const gap = support + 4 + (s.width ?? 0) * 1.1 + extra;
					const x = p.x + normal.x * side * gap;
					const y = p.y + normal.y * side * gap;
					const box = { x: x - w / 2, y: y - h / 2, width: w, height: h };
					let score = Math.abs(t - 0.5) * 20 + extra * 0.6 + (side === outward ? 0 : 6);
					for (const n of nodes) if (boxHitsCircle(box, n, radius)) score += 1000;
					for (const b of badges) if (boxHitsCircle(box, b, b.r + 2)) score += 300;
					for (const o of avoid) if (boxesOverlap(box, o, 1)) score += 200;
					for (const o of placed) if (boxesOverlap(box, o, 2)) score += 250;
					for (const q of samples) if (q.step !== s.stepId && boxHitsCircle(box, q.p, 2)) score += 15;
					if (!best || score < best.score) best = { score, x, y, box };
				}
			}
		}
		placed.push(best!.box);
		out.push({ stepId: s.stepId, text, x: best!.x, y: best!.y, box: best!.box });
	}
	return out;
}

/** The smallest box holding `bounds` and every box given (labels reaching past the nodes), with a margin. */
export function withBoxes(bounds: Bounds, boxes: Box[], margin = 8): Bounds {
	let x0 = bounds.x;
	let y0 = bounds.y;
	let x1 = bounds.x + bounds.width;
	let y1 = bounds.y + bounds.height;
	for (const b of boxes) {
		x0 = Math.min(x0, b.x - margin);
		y0 = Math.min(y0, b.y - margin);
		x1 = Math.max(x1, b.x + b.width + margin);
		y1 = Math.max(y1, b.y + b.height + margin);
	}
	return { x: x0, y: y0, width: x1 - x0, height: y1 - y0 };
}
