export { importRateTable } from './import';
export type { ImportResult } from './import';
export type { SheetIssue } from './types';
export { writeTemplate, templateWorkbook } from './template';
export { EXAMPLE_SCHEME, EXAMPLE_LAB } from './example';
export { LIMITS, SHEETS } from './layout';
