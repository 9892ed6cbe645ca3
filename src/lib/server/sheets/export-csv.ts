/**
 * One audit table as CSV (RFC 4180: comma-separated, CRLF, fields with commas, quotes or line breaks
 * quoted), UTF-8 with a byte-order mark so spreadsheet programs show µ and → correctly.
 *
 * Formula injection (OWASP "CSV Injection"): a text field that starts with =, +, -, @, tab or carriage
 * return would be run as a formula by a spreadsheet program, so it gets a leading apostrophe. Numbers
 * are written as numbers, negative ones included; text that is only a plain numeric literal ("-1")
 * cannot form a formula and is left as it is.
 */
import type { Audit } from '../../engine/index';
import { auditTable, type AuditTableName, type CellValue } from './audit-tables';

const PLAIN_NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export function neutralise(text: string): string {
	if (/^[=+\-@\t\r]/.test(text) && !PLAIN_NUMBER.test(text)) return `'${text}`;
	return text;
}

function field(v: CellValue): string {
	if (v === null) return '';
	if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
	const safe = neutralise(v);
	return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export function auditCsv(audit: Audit, table: AuditTableName): string {
	const t = auditTable(audit, table);
	const lines = [t.columns.map((c) => field(c.header)), ...t.rows.map((r) => r.map(field))].map((r) => r.join(','));
	return '\ufeff' + lines.join('\r\n') + '\r\n';
}
