import { describe, expect, it } from 'vitest';
import { fontRuns } from '../../../server/src/modules/permits/pdf-fonts';

// Which part of Noto Sans covers what is @fontsource/noto-sans's own unicode.json (latin: U+0000-00FF …,
// latin-ext: U+0100-02BA …, greek: U+0370-03FF …); NFC is Unicode Standard Annex #15.
const runs = (text: string) => fontRuns(text).map((r) => [r.subset, r.text]);

describe('finding 7: text cut into runs of the font part that has the letters', () => {
  it('when a name has letters beyond Latin-1, then each stretch goes to the part that covers it', () => {
    expect(runs('Zoë Ó Briain')).toEqual([['latin', 'Zoë Ó Briain']]);
    expect(runs('Łukasz Wróblewski')).toEqual([['latin-ext', 'Ł'], ['latin', 'ukasz Wróblewski']]);
    expect(runs('Αλέξης, 7')).toEqual([['greek', 'Αλέξης'], ['latin', ', 7']]);
  });

  it('when a name was typed with combining accents, then it is composed first so the letter prints whole', () => {
    expect(runs('Zoe\u0308')).toEqual([['latin', 'Zoë']]);
  });

  it('when a character no part has appears, then a stand-in is written, "?" only as the last resort', () => {
    expect(runs('O₂ ≥ 19.5 %')).toEqual([['latin', 'O2 >= 19.5 %']]);
    expect(runs('王')).toEqual([['latin', '?']]);
  });

  it('when the text is bold, then the bold files are named', () => {
    expect(fontRuns('Ł', 700)[0].font).toBe('NotoSans-latin-ext-700');
  });
});
