import { describe, expect, it } from 'vitest';
import { expandLayout, penContacts } from '../src/domain/layout.js';
import { twoRowLayout } from './helpers/layouts.js';

const twoRows = twoRowLayout({ empty: ['B2'] });

describe('barn layout', () => {
  it('labels pens per row as painted on the gate and places rows across the alley', () => {
    const pens = expandLayout(twoRows);
    expect(pens.map((p) => p.id)).toEqual(['A1', 'A2', 'A3', 'A4', 'B1', 'B2', 'B3', 'B4']);
    expect(pens[0]).toMatchObject({ x: 0.5, y: 0.5, status: 'in-use' });
    // Row B centre: one pen depth (row A), the alley, then half a pen: 1 + 0.5 + 0.5.
    expect(pens[4]).toMatchObject({ x: 0.5, y: 2 });
    expect(pens.find((p) => p.id === 'B2')?.status).toBe('empty');
  });

  it('numbers a serpentine barn so that the last pen of row 1 faces the first of row 2', () => {
    const pens = expandLayout({ ...twoRows, numbering: 'serpentine', empty: [], padDigits: 2 });
    expect(pens.map((p) => p.id)).toEqual(['01', '02', '03', '04', '08', '07', '06', '05']);
  });

  it('finds fence, facing and diagonal contacts, and a cross-alley gap breaks the fence line', () => {
    const contacts = penContacts({ ...twoRows, gapsAfter: [2] });
    expect(contacts.fence).toEqual([
      ['A1', 'A2'],
      ['A3', 'A4'],
      ['B1', 'B2'],
      ['B3', 'B4'],
    ]);
    expect(contacts.facing).toEqual([
      ['A1', 'B1'],
      ['A2', 'B2'],
      ['A3', 'B3'],
      ['A4', 'B4'],
    ]);
    expect(contacts.diagonal).toEqual([
      ['A1', 'B2'],
      ['A2', 'B1'],
      ['A3', 'B4'],
      ['A4', 'B3'],
    ]);
  });

  it('rejects an empty-pen list naming a pen the layout does not have', () => {
    expect(() => expandLayout({ ...twoRows, empty: ['C9'] })).toThrow(/C9/);
  });
});
