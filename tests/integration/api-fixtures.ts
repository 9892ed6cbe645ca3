/**
 * Inputs for the API tests: a small invented three-state scheme (a "Kestrel"-style toy cycle with no chemistry,
 * whose rate products around the cycle differ by a factor 1000, so the audit finds one violating cycle) and the
 * same scheme typed into the app's own template workbook, the way a person fills it in.
 */
import ExcelJS from 'exceljs';
import { writeTemplate } from '../../src/lib/server/sheets/index';

export function triangleScheme(name: string, kBackwardC = 2) {
	return {
		format: 'escapement.scheme/1',
		name,
		temperatureK: 298.15,
		concentrationsM: {},
		reactions: [],
		states: [{ id: 'E1' }, { id: 'E2' }, { id: 'E3' }],
		steps: [
			{ id: 'a', from: 'E1', to: 'E2', kForward: 100, kBackward: 10 },
			{ id: 'b', from: 'E2', to: 'E3', kForward: 50, kBackward: 5 },
			{ id: 'c', from: 'E3', to: 'E1', kForward: 20, kBackward: kBackwardC }
		]
	};
}

/** The template workbook with the triangle scheme typed in; `kBackwardC` lands in Steps!E4. */
export async function triangleWorkbook(kBackwardC: number | string = 2): Promise<Uint8Array> {
	const wb = new ExcelJS.Workbook();
	await wb.xlsx.load(Buffer.from(await writeTemplate()) as unknown as ExcelJS.Buffer);
	const states = wb.getWorksheet('States')!;
	states.addRow(['E1', 'empty']);
	states.addRow(['E2', 'bound']);
	states.addRow(['E3', 'stepped']);
	const steps = wb.getWorksheet('Steps')!;
	steps.addRow(['a', 'E1', 'E2', 100, 10]);
	steps.addRow(['b', 'E2', 'E3', 50, 5]);
	steps.addRow(['c', 'E3', 'E1', 20, kBackwardC]);
	return new Uint8Array(await wb.xlsx.writeBuffer());
}

export function upload(bytes: Uint8Array, fileName: string, fields: Record<string, string> = {}): FormData {
	const form = new FormData();
	form.set('file', new File([new Uint8Array(bytes)], fileName, { type: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' }));
	for (const [k, v] of Object.entries(fields)) form.set(k, v);
	return form;
}
