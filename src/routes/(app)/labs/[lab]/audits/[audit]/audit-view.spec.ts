import { describe, expect, it } from 'vitest';
import { cyclePath, cycleStepsText, netReactionText } from './audit-view';

describe('how a cycle reads', () => {
	it('closes the path of states', () => {
		expect(cyclePath(['E', 'T', 'DP', 'D'])).toBe('E → T → DP → D → E');
	});
	it('names the net reaction, its multiple and its direction', () => {
		expect(netReactionText({ 'ATP hydrolysis': 1 })).toBe('ATP hydrolysis');
		expect(netReactionText({ 'ATP hydrolysis': 2, 'Pi exchange': -1 })).toBe('2 × ATP hydrolysis, Pi exchange (reverse)');
		expect(netReactionText({})).toBe('none');
		expect(netReactionText(null)).toBe('—');
	});
	it('lists the steps with the direction each is taken', () => {
		expect(cycleStepsText([{ id: 'ATP on', direction: 1 }, { id: 'futile release', direction: -1 }])).toBe('ATP on (+), futile release (−)');
	});
});
