/**
 * Content hashes of audits: SHA-256 over the JSON Canonicalization Scheme (RFC 8785) of the audit's inputs,
 * results and engine version, so that the hash survives a round trip through PostgreSQL's jsonb (which reorders keys).
 */
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';

export function canonicalJson(value: unknown): string {
	const text = canonicalize(value);
	if (text === undefined) throw new Error('canonical: the value cannot be written as JSON');
	return text;
}

export function sha256Hex(data: string | Uint8Array): string {
	return createHash('sha256').update(data).digest('hex');
}

export function auditHash(parts: { inputs: unknown; results: unknown; engineVersion: string }): string {
	return sha256Hex(canonicalJson({ engineVersion: parts.engineVersion, inputs: parts.inputs, results: parts.results }));
}
