/**
 * Server signatures of signed audits: Ed25519 (RFC 8032, node:crypto) over the RFC 8785 canonical JSON of a signed
 * record, a document with every field a reader sees as part of the record (audit, lab, scheme, revision, author,
 * verdict and counts, engine version, content hash of inputs and results, times, signer, comment, acknowledgement).
 * The private key lives in a file outside the database (SIGNING_KEY_FILE, `.data/signing-key.pem`, mode 0600, made by
 * scripts/lib.sh), so that whoever can write to the database still cannot forge a record; its public half is shown on
 * /signing-key and in the PDF report. verifySignedRecord checks the signature and compares each field with the rows.
 */
import { createHash, createPrivateKey, createPublicKey, sign, verify, type KeyObject } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { canonicalJson, sha256Hex } from './canonical';
import { config } from './config';

export const RECORD_FORMAT = 'escapement.signed-record/1';

export interface SignedRecord {
	format: typeof RECORD_FORMAT;
	audit: {
		id: string;
		createdAt: string;
		engineVersion: string;
		/** SHA-256 of the canonical inputs, results and engine version (auditHash). */
		contentSha256: string;
		/** SHA-256 of the canonical inputs alone, to tell a changed input from a changed result. */
		inputsSha256: string;
		verdict: string;
		verdictCounts: Record<string, number>;
	};
	lab: { id: string; slug: string; name: string };
	scheme: { id: string; name: string };
	revision: { id: string; number: number; sourceFileName: string | null; sourceSha256: string | null };
	author: { id: string; name: string | null; email: string };
	signer: { id: string; name: string };
	signedAt: string;
	comment: string;
	violationAcknowledged: boolean;
	key: { algorithm: 'Ed25519'; fingerprint: string };
}

interface ServerKey {
	privateKey: KeyObject;
	publicKey: KeyObject;
	publicKeyPem: string;
	/** SHA-256 of the public key's DER (SubjectPublicKeyInfo), hex. */
	fingerprint: string;
}

let loaded: ServerKey | undefined;

/** The server's signing key, read once from SIGNING_KEY_FILE; fails with a message that says how to make one. */
export function serverKey(): ServerKey {
	if (loaded) return loaded;
	const file = config.signingKeyFile;
	let pem: string;
	try {
		pem = readFileSync(file, 'utf8');
	} catch {
		throw new Error(`signing: cannot read the signing key ${file}. \`npm start\` and \`npm test\` create one (scripts/lib.sh, ensure_signing_key); or set SIGNING_KEY_FILE to an Ed25519 private key in PEM.`);
	}
	if ((statSync(file).mode & 0o077) !== 0) throw new Error(`signing: ${file} is readable by others; run \`chmod 600 ${file}\`.`);
	const privateKey = createPrivateKey(pem);
	if (privateKey.asymmetricKeyType !== 'ed25519') throw new Error(`signing: ${file} holds a ${privateKey.asymmetricKeyType} key; Escapement signs with Ed25519.`);
	const publicKey = createPublicKey(privateKey);
	const der = publicKey.export({ type: 'spki', format: 'der' });
	loaded = { privateKey, publicKey, publicKeyPem: publicKey.export({ type: 'spki', format: 'pem' }).toString(), fingerprint: createHash('sha256').update(der).digest('hex') };
	return loaded;
}

/** The fingerprint in groups of four, for people to compare by eye. */
export function groupedFingerprint(fingerprint: string): string {
	return fingerprint.match(/.{1,4}/g)?.join(' ') ?? fingerprint;
}

export function inputsHash(inputs: unknown): string {
	return sha256Hex(canonicalJson(inputs));
}

/** Canonical text and Ed25519 signature (base64) of a record. */
export function signRecord(record: Omit<SignedRecord, 'format' | 'key'>): { text: string; signature: string; fingerprint: string } {
	const key = serverKey();
	const full: SignedRecord = { format: RECORD_FORMAT, ...record, key: { algorithm: 'Ed25519', fingerprint: key.fingerprint } };
	const text = canonicalJson(full);
	return { text, signature: sign(null, Buffer.from(text, 'utf8'), key.privateKey).toString('base64'), fingerprint: key.fingerprint };
}

/** True when `signature` is this server's Ed25519 signature of `text`. */
export function signatureHolds(text: string, signature: string): boolean {
	try {
		return verify(null, Buffer.from(text, 'utf8'), serverKey().publicKey, Buffer.from(signature, 'base64'));
	} catch {
		return false;
	}
}

export interface RecordProblem {
	/** The field that differs, as a path into the record (e.g. `audit.verdict`, `signer.name`), or `signature`. */
	field: string;
	message: string;
}

/** Leaf paths and values of a plain JSON object, for a field-by-field comparison. */
function leaves(value: unknown, path = ''): [string, unknown][] {
	if (value && typeof value === 'object' && !Array.isArray(value))
		return Object.entries(value as Record<string, unknown>).flatMap(([k, v]) => leaves(v, path ? `${path}.${k}` : k));
	return [[path, value]];
}

/**
 * Compares the record as signed with the record rebuilt from the rows now stored, field by field, after checking the
 * signature. `current` is what the rows say today.
 */
export function compareRecord(signedText: string | null, signature: string | null, current: Omit<SignedRecord, 'format' | 'key'>): RecordProblem[] {
	if (!signedText || !signature) return [{ field: 'signature', message: 'This audit carries no server signature (it was signed before records were signed with the server key, or the signature was removed).' }];
	const problems: RecordProblem[] = [];
	if (!signatureHolds(signedText, signature))
		problems.push({ field: 'signature', message: 'The Ed25519 signature does not hold for the stored record with this server’s key: the record was altered, or signed with another key.' });
	let signed: SignedRecord;
	try {
		signed = JSON.parse(signedText) as SignedRecord;
	} catch {
		return [...problems, { field: 'record', message: 'The stored signed record is not JSON.' }];
	}
	if (signed.key?.fingerprint !== serverKey().fingerprint)
		problems.push({ field: 'key.fingerprint', message: `Signed with key ${signed.key?.fingerprint ?? '(none)'}, not this server’s key ${serverKey().fingerprint}.` });
	const was = new Map(leaves({ ...signed, format: undefined, key: undefined }));
	for (const [path, now] of leaves(current)) {
		const then = was.get(path);
		if (canonicalJson(then ?? null) !== canonicalJson(now ?? null))
			problems.push({ field: path, message: `${path} is ${JSON.stringify(now)} in the database but ${JSON.stringify(then)} in the signed record.` });
	}
	return problems;
}
