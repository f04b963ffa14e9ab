import { describe, expect, it } from 'vitest';
import { polarityLine } from '../../../client/components/sections/polarity';

describe('polarityLine', () => {
  it('says "Polarity:" once when the note starts with the word', () => {
    expect(polarityLine('Polarity: normal (SEG), peak = hard kick')).toBe('Polarity: normal (SEG), peak = hard kick');
    expect(polarityLine('polarity - reverse')).toBe('Polarity: reverse');
    expect(polarityLine('POLARITY normal')).toBe('Polarity: normal');
    expect(polarityLine('  Polarity —  European  ')).toBe('Polarity: European');
  });
  it('keeps a note that does not start with the word', () => {
    expect(polarityLine('normal (SEG)')).toBe('Polarity: normal (SEG)');
    expect(polarityLine('Polarityless trace header')).toBe('Polarity: Polarityless trace header');
  });
  it('keeps a note that is only the word', () => {
    expect(polarityLine('Polarity')).toBe('Polarity: Polarity');
  });
});
