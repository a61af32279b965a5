import { describe, expect, it } from 'vitest';
import { isoDateField, isoDateTimeField, isStorableText, textField } from '@shared/schemas/common.schema';
import { MAX_INPUT_DEPTH, unstorableInput } from '../../server/src/middleware/validate';

// Awkward but well-formed text must pass untouched; only what PostgreSQL cannot store as sent is refused.
const wellFormed = {
  'combining marks': 'Cafe\u0301 ma\u0308rker n\u0303',
  'right-to-left text and marks': 'صمام العزل \u202eabc\u202c שסתום',
  'emoji (surrogate pairs)': 'Valve 🔒 locked 👷‍♀️ 🇬🇧',
  '10 kB of text': 'ä'.repeat(5_000) + 'x'.repeat(5_000),
  'CJK and astral characters': '閥門 𠜎 𝔘𝔫𝔦𝔠𝔬𝔡𝔢',
};
const unstorable = {
  'a lone high surrogate': 'probe \ud800 text',
  'a lone low surrogate': 'probe \udc00 text',
  'a reversed pair': '\ude00\ud83d',
  'a NUL character': 'probe \u0000 text',
};

describe('finding 1: text PostgreSQL can store exactly as sent', () => {
  it.each(Object.entries(wellFormed))('when text holds %s, then it is storable and a text field keeps it', (_label, text) => {
    expect(isStorableText(text)).toBe(true);
    expect(textField(20_000, 'Notes').parse(text)).toBe(text.trim());
  });

  it.each(Object.entries(unstorable))('when text holds %s, then it is refused with a plain message', (_label, text) => {
    expect(isStorableText(text)).toBe(false);
    const result = textField(2000, 'Reason').safeParse(text);
    expect(result.success).toBe(false);
    expect(result.error!.issues).toHaveLength(1);
    expect(result.error!.issues[0].message).toBe('Reason contains a broken or hidden character that cannot be saved. Type it again.');
  });

  it('when a request part holds unstorable text in values or field names at any depth, then each is named by its path', () => {
    const body = { reason: 'ok', notes: 'bad \ud800', steps: [{ label: 'fine' }, { label: 'nul \u0000' }], nested: { ['key\udfff']: 1 } };
    expect(unstorableInput(body).sort((a, b) => a.path.localeCompare(b.path))).toEqual([
      { path: 'nested.key\ufffd', message: 'This field name has a broken or hidden character.' },
      { path: 'notes', message: expect.stringContaining('cannot be saved') },
      { path: 'steps.1.label', message: expect.stringContaining('cannot be saved') },
    ]);
    expect(unstorableInput({ ...wellFormed, list: Object.values(wellFormed) })).toEqual([]);
    expect(unstorableInput('bad \ud800')).toEqual([{ path: '', message: expect.stringContaining('cannot be saved') }]);
  });
});

describe('finding 6: nesting is bounded without recursion', () => {
  const nest = (depth: number) => {
    let v: unknown = 1;
    for (let i = 0; i < depth; i++) v = i % 2 ? { a: v } : [v];
    return v;
  };

  it(`when a body nests ${MAX_INPUT_DEPTH} levels, then it passes; one level more is refused`, () => {
    expect(unstorableInput(nest(MAX_INPUT_DEPTH))).toEqual([]);
    expect(unstorableInput(nest(MAX_INPUT_DEPTH + 1))).toEqual([{ path: expect.any(String), message: `Nested more than ${MAX_INPUT_DEPTH} levels deep.` }]);
  });

  it('when a body nests 100,000 levels, then the check answers without overflowing the stack', () => {
    expect(unstorableInput(nest(100_000))).toHaveLength(1);
  });
});

describe('finding 6: dates PostgreSQL and JavaScript can both hold', () => {
  it.each(['0000-01-01T00:00:00Z', '0001-01-01T00:00:00+14:00', '10000-01-01T00:00:00Z', '+010000-01-01T00:00:00Z', '9999-12-31T23:59:59-01:00'])(
    'when a date and time is %s, then it is refused',
    (value) => expect(isoDateTimeField().safeParse(value).success).toBe(false),
  );
  it.each(['0001-01-01T00:00:00Z', '2026-12-02T07:00:00Z', '2026-12-02T07:00:00.123+05:30', '9999-12-31T23:59:59.999Z'])('when a date and time is %s, then it is accepted', (value) =>
    expect(isoDateTimeField().parse(value)).toBe(value),
  );
  it('when a calendar date is in year 0000 or 10000, then it is refused; 0001 and 9999 pass', () => {
    expect(isoDateField().safeParse('0000-01-01').error?.issues[0].message).toBe('Check the year: it must be between 0001 and 9999.');
    expect(isoDateField().safeParse('10000-01-01').success).toBe(false);
    expect(isoDateField().parse('0001-01-01')).toBe('0001-01-01');
    expect(isoDateField().parse('9999-12-31')).toBe('9999-12-31');
  });
});
