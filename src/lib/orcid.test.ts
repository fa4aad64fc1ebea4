import { describe, expect, test } from 'vitest';
import { mod112CheckCharacter, parseOrcid } from './orcid';

// The example iD 0000-0002-1825-0097 is the one ORCID's support documentation uses to explain the
// structure and the check digit of an iD (from memory).
const ORCID_DOCUMENTATION_EXAMPLE = '0000-0002-1825-0097';

describe('ORCID iD', () => {
	test('the documentation example is accepted and its check digit is 7', () => {
		expect(mod112CheckCharacter('000000021825009')).toBe('7');
		expect(parseOrcid(ORCID_DOCUMENTATION_EXAMPLE)).toEqual({ ok: true, orcid: ORCID_DOCUMENTATION_EXAMPLE });
	});

	test('the same iD with a wrong check digit is refused', () => {
		const result = parseOrcid('0000-0002-1825-0098');
		expect(result.ok).toBe(false);
		if (!result.ok) expect(result.message).toMatch(/check digit/);
	});

	test.each([
		['https://orcid.org/0000-0002-1825-0097', '0000-0002-1825-0097'],
		['0000000218250097', '0000-0002-1825-0097'],
		// A check value of 10 is written X: 0000-0002-9079-593X checks by the same rule.
		['0000-0002-9079-593x', '0000-0002-9079-593X']
	])('%s is normalised to %s', (input, expected) => {
		expect(parseOrcid(input)).toEqual({ ok: true, orcid: expected });
	});

	test.each(['', '0000-0002-1825', 'abcd-0002-1825-0097', '0000-0002-1825-00977'])('%j is not an iD', (input) => {
		expect(parseOrcid(input).ok).toBe(false);
	});
});
