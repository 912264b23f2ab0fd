// Which results the Images tab compares: a result that arrives while four are compared waits
// for the user to choose which leaves; the uncorrected baseline is never dropped silently.
import { describe, expect, it } from 'vitest';
import { baselineOf, MAX_COMPARED, offer, replace, withdraw } from '../../web/ui/logic/compare-set';

describe('the compared set', () => {
  const four = { ids: ['baseline', 'water', 'mirror', 'edge'] };

  it('takes a result while there is room, and none twice', () => {
    expect(offer({ ids: ['a'] }, 'b')).toEqual({ ids: ['a', 'b'], waiting: undefined });
    expect(offer({ ids: ['a', 'b'] }, 'a')).toEqual({ ids: ['a', 'b'], waiting: undefined });
  });

  it(`keeps all ${MAX_COMPARED} when another arrives: it waits, and nothing leaves until the user chooses`, () => {
    const s = offer(four, 'cosine');
    expect(s).toEqual({ ids: four.ids, waiting: 'cosine' });
    // The user lets "mirror" go: the newcomer takes its place (and its colour).
    expect(replace(s, 'mirror')).toEqual({ ids: ['baseline', 'water', 'cosine', 'edge'] });
    // A choice that is not compared changes nothing.
    expect(replace(s, 'elsewhere')).toBe(s);
  });

  it('a result unticked or deleted leaves, and stops waiting', () => {
    expect(withdraw({ ids: ['a', 'b'], waiting: 'c' }, 'a')).toEqual({ ids: ['b'], waiting: 'c' });
    expect(withdraw({ ids: ['a', 'b'], waiting: 'c' }, 'c')).toEqual({ ids: ['a', 'b'], waiting: undefined });
    // Once there is room again, the one that waited can come in.
    expect(offer(withdraw(offer(four, 'cosine'), 'edge'), 'cosine')).toEqual({ ids: ['baseline', 'water', 'mirror', 'cosine'], waiting: undefined });
  });

  it('the baseline is the latest FBP without truncation correction', () => {
    const r = (id: string, recipe: Record<string, unknown>) => ({ id, recipe });
    expect(baselineOf([r('w', { method: 'fbp', extend: 'water' }), r('s', { method: 'sart' })])).toBeUndefined();
    expect(baselineOf([r('n1', { method: 'fbp' }), r('w', { method: 'fbp', extend: 'water' }), r('n2', { method: 'fbp', extend: 'none' }), r('p', { method: 'prior' })])).toBe('n2');
  });
});
