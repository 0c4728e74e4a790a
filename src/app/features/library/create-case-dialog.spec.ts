import { describe, expect, it } from 'vitest';

import { parseTags, tagsProblem } from './create-case-dialog';

describe('create case dialog tags', () => {
  it('splits, trims and drops repeats', () => {
    expect(parseTags(' shaker, upright ,shaker,, ')).toEqual(['shaker', 'upright']);
  });

  it('names the tag that is too long and the limit, in words', () => {
    const long = 'a'.repeat(41);
    expect(tagsProblem(`shaker, ${long}`)).toBe(`“${'a'.repeat(24)}…” is 41 characters long; a tag holds at most 40.`);
    expect(tagsProblem(`shaker, ${'a'.repeat(40)}`)).toBeNull();
  });

  it('refuses more than 20 tags with the count', () => {
    const many = Array.from({ length: 21 }, (_, i) => `t${i}`).join(',');
    expect(tagsProblem(many)).toBe('At most 20 tags; this has 21.');
  });
});
