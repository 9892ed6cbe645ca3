/**
 * Adopting a correction proposal: the new revision holds exactly the proposed rates, and auditing it finds no
 * violation (Kolmogorov's criterion with driving, Hill 1989 [pub]); the audited revision and audit are unchanged.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { makeLab } from './db';
import { createScheme, getRevision } from '../../src/lib/server/schemes';
import { adoptCorrection, getAudit, runAudit } from '../../src/lib/server/audits';
import { stopJobs } from '../../src/lib/server/jobs';
import { compositeWithViolation, stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';

afterAll(async () => {
	await stopJobs();
});

describe('adopting the smallest consistent correction', () => {
	it('saves the proposed rates as a new revision whose audit has no violation', async () => {
		const { lab, people } = await makeLab(['modeller', 'reader']);
		const modeller: LabAccess = { lab, role: 'modeller', user: { id: people.modeller.id, email: people.modeller.email, name: null } };
		// A violation without irreversible cycles: the K-7 stepper with one back rate 40 times too large.
		const base = stepperWithFutileBranch();
		const broken = { ...base, name: 'broken', steps: base.steps.map((s) => (s.id === 'futile release' ? { ...s, kBackward: s.kBackward * 40 } : s)) };
		const created = await createScheme(modeller, { scheme: broken });
		const audit = await runAudit(modeller, created.scheme.id);
		expect(audit.verdict).toBe('violation');

		const { revision } = await adoptCorrection(modeller, audit.id);
		expect(revision.number).toBe(2);
		const saved = await getRevision(lab.id, created.scheme.id, 2);
		const stored = await getAudit(lab.id, audit.id);
		for (const change of stored.results.correction!.changes) {
			const step = saved.scheme.steps.find((s) => s.id === change.stepId)!;
			expect(step[change.rate]).toBe(change.to);
		}
		const again = await runAudit(modeller, created.scheme.id);
		expect(again.verdictCounts).toMatchObject({ violation: 0 });
		expect((await getRevision(lab.id, created.scheme.id, 1)).scheme.steps).toEqual(broken.steps);

		const reader: LabAccess = { ...modeller, role: 'reader', user: { ...modeller.user, id: people.reader.id } };
		await expect(adoptCorrection(reader, audit.id)).rejects.toMatchObject({ status: 403 });
		await expect(adoptCorrection(modeller, again.id)).rejects.toMatchObject({ status: 409 });
	});

	it('does not touch what an irreversible step makes undecidable', async () => {
		const { lab, people } = await makeLab(['modeller']);
		const modeller: LabAccess = { lab, role: 'modeller', user: { id: people.modeller.id, email: people.modeller.email, name: null } };
		const created = await createScheme(modeller, { scheme: compositeWithViolation() });
		const audit = await runAudit(modeller, created.scheme.id);
		const stored = await getAudit(lab.id, audit.id);
		const changed = new Set(stored.results.correction?.changes.map((c) => `${c.stepId}:${c.rate}`));
		// A zero rate stays zero: no finite factor turns it into a measured rate.
		expect(changed.has('ADP off:kBackward')).toBe(false);
	});
});
