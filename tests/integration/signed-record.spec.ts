/**
 * The signed record: the server signs (Ed25519, RFC 8032) the RFC 8785 canonical JSON of every field shown as part of
 * a signed audit. Each stored field is changed behind the triggers, as a database superuser would, and verify must
 * fail naming that field; rewriting the results and both hashes with the public algorithm must fail too.
 * Regression test: the verdict, counts, times, signer name and comment used to be outside the hash, and a rewrite of
 * results plus both hashes verified.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import { createPublicKey, verify as edVerify } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { makeLab, TEST_PASSWORD } from './db';
import { createScheme } from '../../src/lib/server/schemes';
import { getAudit, runAudit, verifyAudit, verifyAuditById } from '../../src/lib/server/audits';
import { signAudit, submitForReview } from '../../src/lib/server/reviews';
import { stopJobs } from '../../src/lib/server/jobs';
import { auditHash, canonicalJson } from '../../src/lib/server/canonical';
import { serverKey } from '../../src/lib/server/signing';
import { compositeWithViolation, stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';
import type { Scheme } from '../../src/lib/engine';

// The tamperer: the database's owner (a superuser in the local clusters), which can switch triggers off.
const owner = new pg.Pool({ connectionString: process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL, max: 2 });
afterAll(async () => {
	await owner.end();
	await stopJobs();
});

/** Runs statements with every trigger off (session_replication_role = replica), as only a superuser can. */
async function behindTriggers(statements: [string, unknown[]][]): Promise<void> {
	const client = await owner.connect();
	try {
		await client.query('begin');
		await client.query('set local session_replication_role = replica');
		for (const [text, values] of statements) await client.query(text, values);
		await client.query('commit');
	} catch (err) {
		await client.query('rollback');
		throw err;
	} finally {
		client.release();
	}
}

type Person = { id: string; email: string; name: string | null };
const as = (lab: LabAccess['lab'], role: LabAccess['role'], p: Person): LabAccess => ({ lab, role, user: { id: p.id, email: p.email, name: p.name } });

let setting: Awaited<ReturnType<typeof signedViolatingAudit>>;

async function signedViolatingAudit() {
	const { lab, people } = await makeLab(['lead', 'modeller', 'reviewer']);
	const created = await createScheme(as(lab, 'modeller', people.modeller), { scheme: compositeWithViolation() });
	const audit = await runAudit(as(lab, 'modeller', people.modeller), created.scheme.id);
	await submitForReview(as(lab, 'modeller', people.modeller), audit.id, '');
	return { lab, people, audit, reviewer: as(lab, 'reviewer', people.reviewer) };
}

beforeAll(async () => {
	setting = await signedViolatingAudit();
});

describe('a violating audit is signed only with an acknowledgement', () => {
	it('refuses without the acknowledgement or without a comment, then records it in the signed record', async () => {
		const { audit, reviewer, lab } = setting;
		expect((await getAudit(lab.id, audit.id)).verdictCounts.violation).toBeGreaterThan(0); // [der] the scheme is built with one
		await expect(signAudit(reviewer, audit.id, { password: TEST_PASSWORD, comment: 'fine' })).rejects.toMatchObject({ status: 400 });
		await expect(signAudit(reviewer, audit.id, { password: TEST_PASSWORD, comment: '  ', acknowledgeViolation: true })).rejects.toMatchObject({ status: 400 });
		expect((await getAudit(lab.id, audit.id)).status).toBe('submitted');
		await signAudit(reviewer, audit.id, { password: TEST_PASSWORD, comment: 'Rates as published; the violation is the point of the report.', acknowledgeViolation: true });
		const stored = await getAudit(lab.id, audit.id);
		expect(stored.signature?.violationAcknowledged).toBe(true);
		expect(JSON.parse(stored.signature!.record!).violationAcknowledged).toBe(true);
	});
});

describe('the signed record', () => {
	it('is Ed25519-signed canonical JSON that the public key alone verifies', async () => {
		const { audit, lab } = setting;
		const stored = await getAudit(lab.id, audit.id);
		const record = stored.signature!.record!;
		expect(canonicalJson(JSON.parse(record))).toBe(record); // [pub] RFC 8785: canonical text is a fixed point
		// [pub] RFC 8032 Ed25519, checked with nothing but the public key from the key file (no app code).
		const publicKey = createPublicKey(readFileSync(process.env.SIGNING_KEY_FILE ?? '.data/signing-key.pem', 'utf8'));
		expect(edVerify(null, Buffer.from(record), publicKey, Buffer.from(stored.signature!.recordSignature!, 'base64'))).toBe(true);
		expect(edVerify(null, Buffer.from(record.replace('"verdict":"violation"', '"verdict":"consistent"')), publicKey, Buffer.from(stored.signature!.recordSignature!, 'base64'))).toBe(false);
		const parsed = JSON.parse(record);
		expect(parsed).toMatchObject({ audit: { id: audit.id, verdict: 'violation', engineVersion: audit.engineVersion, contentSha256: audit.sha256 }, lab: { id: lab.id, slug: lab.slug } });
		expect(parsed.key.fingerprint).toBe(serverKey().fingerprint);
		const check = await verifyAudit(stored);
		expect(check.problems).toEqual([]);
		expect(check.matches && check.signature?.valid).toBe(true);
	});

	it('names the field when any stored field is changed behind the triggers, and holds again when restored', async () => {
		const { audit, lab, people } = setting;
		const before = await getAudit(lab.id, audit.id);
		const sig = before.signature!;
		const counts = before.verdictCounts;
		const later = new Date(before.createdAt.getTime() + 86_400_000);
		const inputs = structuredClone(before.inputs) as Scheme;
		inputs.steps[0].kForward *= 2;
		// [der] each change of a shown field, and the fields verify must name for it.
		const tampers: { what: string; change: [string, unknown[]][]; undo: [string, unknown[]][]; names: RegExp[] }[] = [
			{ what: 'verdict', change: [['update audits set verdict = $2 where id = $1', [audit.id, 'consistent']]], undo: [['update audits set verdict = $2 where id = $1', [audit.id, before.verdict]]], names: [/^audit\.verdict$/] },
			{
				what: 'verdict counts',
				change: [['update audits set verdict_counts = $2 where id = $1', [audit.id, { ...counts, violation: 0, consistent: counts.consistent + counts.violation }]]],
				undo: [['update audits set verdict_counts = $2 where id = $1', [audit.id, counts]]],
				names: [/^audit\.verdictCounts\.violation$/, /^audit\.verdictCounts\.consistent$/]
			},
			{ what: 'creation time', change: [['update audits set created_at = $2 where id = $1', [audit.id, later]]], undo: [['update audits set created_at = $2 where id = $1', [audit.id, before.createdAt]]], names: [/^audit\.createdAt$/] },
			{ what: 'engine version', change: [['update audits set engine_version = $2 where id = $1', [audit.id, '0.0.0-forged']]], undo: [['update audits set engine_version = $2 where id = $1', [audit.id, before.engineVersion]]], names: [/^audit\.engineVersion$/, /^results$/] },
			{ what: 'author', change: [['update audits set created_by = $2 where id = $1', [audit.id, people.lead.id]]], undo: [['update audits set created_by = $2 where id = $1', [audit.id, before.createdBy]]], names: [/^author\.id$/, /^author\.email$/] },
			{ what: 'status', change: [["update audits set status = 'submitted' where id = $1", [audit.id]]], undo: [["update audits set status = 'signed' where id = $1", [audit.id]]], names: [/^status$/] },
			{ what: 'inputs', change: [['update audits set inputs = $2 where id = $1', [audit.id, inputs]]], undo: [['update audits set inputs = $2 where id = $1', [audit.id, before.inputs]]], names: [/^audit\.inputsSha256$/, /^inputs$/] },
			{ what: 'signer name', change: [['update signatures set signer_name = $2 where audit_id = $1', [audit.id, 'Someone Else']]], undo: [['update signatures set signer_name = $2 where audit_id = $1', [audit.id, sig.signerName]]], names: [/^signer\.name$/] },
			{ what: 'signer', change: [['update signatures set signer_id = $2 where audit_id = $1', [audit.id, people.lead.id]]], undo: [['update signatures set signer_id = $2 where audit_id = $1', [audit.id, sig.signerId]]], names: [/^signer\.id$/] },
			{ what: 'comment', change: [['update signatures set comment = $2 where audit_id = $1', [audit.id, 'All consistent.']]], undo: [['update signatures set comment = $2 where audit_id = $1', [audit.id, sig.comment]]], names: [/^comment$/] },
			{ what: 'signing time', change: [['update signatures set created_at = $2 where audit_id = $1', [audit.id, later]]], undo: [['update signatures set created_at = $2 where audit_id = $1', [audit.id, sig.signedAt]]], names: [/^signedAt$/] },
			{ what: 'acknowledgement', change: [['update signatures set violation_acknowledged = false where audit_id = $1', [audit.id]]], undo: [['update signatures set violation_acknowledged = true where audit_id = $1', [audit.id]]], names: [/^violationAcknowledged$/] },
			{ what: 'revision number', change: [['update scheme_revisions set number = 99 where id = $1', [before.revisionId]]], undo: [['update scheme_revisions set number = $2 where id = $1', [before.revisionId, before.revision]]], names: [/^revision\.number$/] },
			{ what: 'scheme name', change: [['update schemes set name = $2 where id = $1', [before.schemeId, 'Forged name']]], undo: [['update schemes set name = $2 where id = $1', [before.schemeId, before.schemeName]]], names: [/^scheme\.name$/] },
			{ what: 'lab name', change: [['update labs set name = $2 where id = $1', [lab.id, 'Forged Lab']]], undo: [['update labs set name = $2 where id = $1', [lab.id, lab.name]]], names: [/^lab\.name$/] }
		];
		for (const t of tampers) {
			await behindTriggers(t.change);
			const check = await verifyAudit(await getAudit(lab.id, audit.id));
			await behindTriggers(t.undo);
			expect(check.matches, t.what).toBe(false);
			const fields = check.problems.map((p) => p.field);
			for (const name of t.names) expect(fields.some((f) => name.test(f)), `${t.what}: ${fields.join(', ')}`).toBe(true);
		}
		const restored = await verifyAudit(await getAudit(lab.id, audit.id));
		expect(restored.problems).toEqual([]);
		expect(restored.matches).toBe(true);
	});

	it('fails when results and both hashes are rewritten with the public algorithm, and when the record is rewritten too', async () => {
		const { audit, lab } = setting;
		const before = await getAudit(lab.id, audit.id);
		const forged = { ...before.results, verdictCounts: { ...before.results.verdictCounts, violation: 0 } };
		const hash = auditHash({ inputs: before.inputs, results: forged, engineVersion: before.engineVersion }); // [pub] RFC 8785 + SHA-256, as anyone can
		const record = JSON.parse(before.signature!.record!);
		record.audit.contentSha256 = hash;
		const undo: [string, unknown[]][] = [
			['update audits set results = $2, sha256 = $3 where id = $1', [audit.id, before.results, before.sha256]],
			['update signatures set sha256 = $2, record = $3 where audit_id = $1', [audit.id, before.sha256, before.signature!.record]]
		];

		await behindTriggers([
			['update audits set results = $2, sha256 = $3 where id = $1', [audit.id, forged, hash]],
			['update signatures set sha256 = $2 where audit_id = $1', [audit.id, hash]]
		]);
		const both = await verifyAudit(await getAudit(lab.id, audit.id));
		// ... and the record rewritten to match, but not re-signed (the key is not in the database).
		await behindTriggers([['update signatures set record = $2 where audit_id = $1', [audit.id, canonicalJson(record)]]]);
		const all = await verifyAuditById(audit.id);
		await behindTriggers(undo);

		expect(both.matches).toBe(false);
		expect(both.problems.map((p) => p.field)).toEqual(expect.arrayContaining(['audit.contentSha256', 'results']));
		expect(all.matches).toBe(false);
		expect(all.signature?.valid).toBe(false);
		expect(all.problems.map((p) => p.field)).toContain('signature');
		expect((await verifyAuditById(audit.id)).matches).toBe(true);
	});

	it('a consistent audit signs without acknowledgement; an unsigned audit verifies by its hash alone', async () => {
		const { lab, people } = await makeLab(['modeller', 'reviewer']);
		const created = await createScheme(as(lab, 'modeller', people.modeller), { scheme: stepperWithFutileBranch() });
		const audit = await runAudit(as(lab, 'modeller', people.modeller), created.scheme.id);
		const draft = await verifyAudit(await getAudit(lab.id, audit.id));
		expect(draft).toMatchObject({ matches: true, signature: null, problems: [] });
		await submitForReview(as(lab, 'modeller', people.modeller), audit.id, '');
		await signAudit(as(lab, 'reviewer', people.reviewer), audit.id, { password: TEST_PASSWORD, comment: '' });
		const signed = await getAudit(lab.id, audit.id);
		expect(signed.signature?.violationAcknowledged).toBe(false);
		expect((await verifyAudit(signed)).matches).toBe(true);
	});
});
