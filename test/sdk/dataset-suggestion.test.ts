import { describe, expect, it } from 'vitest';
import { closestSlug, editDistance } from '../../sdk/cli/dataset-suggestion.ts';

describe('did you mean', () => {
  it('computes the Levenshtein distances of the textbook examples', () => {
    // Worked examples (from memory, as usually taught): kitten -> sitting is 3, flaw -> lawn is 2.
    expect(editDistance('kitten', 'sitting')).toBe(3);
    expect(editDistance('flaw', 'lawn')).toBe(2);
    expect(editDistance('', 'abc')).toBe(3);
    expect(editDistance('same', 'same')).toBe(0);
  });

  it('suggests the close slug only, never a far one', () => {
    const slugs = ['harrow-vale-care', 'pharmacies', 'night-shelters'];
    expect(closestSlug('harrow-vale-car', slugs)).toBe('harrow-vale-care');
    expect(closestSlug('pharmacys', slugs)).toBe('pharmacies');
    expect(closestSlug('no-such-set', slugs)).toBeNull();
    expect(closestSlug('x', [])).toBeNull();
  });
});
