import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { barnGeometry, barnMapPieces, renderBarnMap, type PenMark } from '../../src/report/html/barnMap.js';
import { safeId } from '../../src/report/html/escape.js';
import { expectClose } from '../helpers/expectClose.js';
import { twoRowLayout } from '../helpers/layouts.js';

/** A 2 x 4 barn: rows A (top) and B, pens 1 x 1, alley 0.5 (all in pen units). */
const layout = twoRowLayout;

const rect = (geometry: ReturnType<typeof barnGeometry>, id: string) => {
  const found = geometry.pens.find((pen) => pen.id === id);
  if (!found) throw new Error(`no pen ${id}`);
  return found;
};

describe('barnGeometry', () => {
  it('draws a 2 x 4 barn as 8 rectangles with row B below the alley', () => {
    const g = barnGeometry(layout(), 10);
    expect(g.pens).toHaveLength(8);
    // By hand (layout.ts): pen centre x = (position + 0.5) penWidth, row y = (row + 0.5) penDepth + alleys before * alleyWidth.
    // A1 centre (0.5, 0.5) -> top-left (0, 0); A4 centre (3.5, 0.5) -> (30, 0) at 10 px per unit.
    expect(rect(g, 'A1')).toMatchObject({ x: 0, y: 0, width: 10, height: 10 });
    expect(rect(g, 'A4')).toMatchObject({ x: 30, y: 0 });
    // B1 centre y = 1.5 + 0.5 = 2.0 -> top 1.5 units = 15 px, i.e. below the alley band at 10..15 px.
    expect(rect(g, 'B1')).toMatchObject({ x: 0, y: 15, width: 10, height: 10 });
    const alley = g.bands.filter((band) => band.kind === 'alley');
    expect(alley).toEqual([{ kind: 'alley', x: 0, y: 10, width: 40, height: 5 }]);
    for (const pen of g.pens.filter((p) => p.rowLabel === 'B'))
      expect(pen.y).toBeGreaterThanOrEqual(alley[0]!.y + alley[0]!.height);
    // Whole barn by hand: 4 pens long (40 px), 2 pens + alley deep (25 px).
    expect([g.width, g.height]).toEqual([40, 25]);
  });

  it('shifts every pen after a gap by gapWidth, in both rows, and draws the gap', () => {
    const plain = barnGeometry(layout(), 10);
    const gapped = barnGeometry(layout({ gapsAfter: [2], gapWidth: 1.5 }), 10);
    // By hand: a gap after position 2 moves pens 3 and 4 by 1.5 units = 15 px; pens 1 and 2 stay.
    for (const id of ['A1', 'A2', 'B1', 'B2']) expect(rect(gapped, id).x).toBe(rect(plain, id).x);
    for (const id of ['A3', 'A4', 'B3', 'B4'])
      expectClose(rect(gapped, id).x - rect(plain, id).x, 15, { abs: 1e-9 }, `shift of ${id}`);
    expect(gapped.bands.find((band) => band.kind === 'gap')).toEqual({
      kind: 'gap',
      x: 20,
      y: 0,
      width: 15,
      height: 25,
    });
    expect(gapped.width).toBe(55);
  });

  it('adds one gapWidth per gap passed when a row has two gaps', () => {
    const g = barnGeometry(layout({ pensPerRow: 6, gapsAfter: [2, 4], gapWidth: 1 }), 10);
    // By hand: A3 and A4 sit after one gap (+10 px), A5 and A6 after two (+20 px); gaps start at x = 20 and 40 + 10 = 50 px.
    expect(['A1', 'A2', 'A3', 'A4', 'A5', 'A6'].map((id) => rect(g, id).x)).toEqual([0, 10, 30, 40, 60, 70]);
    expect(g.bands.filter((band) => band.kind === 'gap').map((band) => band.x)).toEqual([20, 50]);
    expect(g.width).toBe(80);
  });

  it('draws pens to scale from penWidth and penDepth', () => {
    const g = barnGeometry(layout({ penWidth: 1.5, penDepth: 2.5, alleyWidth: 1 }), 8);
    const a1 = rect(g, 'A1');
    // By hand: 1.5 x 2.5 units at 8 px per unit = 12 x 20 px; the aspect ratio is the layout's.
    expect([a1.width, a1.height]).toEqual([12, 20]);
    expectClose(a1.width / a1.height, 1.5 / 2.5, { rel: 1e-12 }, 'aspect ratio');
    // B1 top: row y = 1.5 * 2.5 + 1 = 4.75, minus half the depth 1.25 = 3.5 units = 28 px (20 px row A + 8 px alley).
    expect(rect(g, 'B1').y).toBe(28);
  });

  it('puts two alleys in a four-row barn and rows 2 and 3 back to back', () => {
    const g = barnGeometry(layout({ rows: 4, rowLabels: ['A', 'B', 'C', 'D'] }), 10);
    expect(g.pens).toHaveLength(16);
    expect(g.bands.filter((band) => band.kind === 'alley')).toHaveLength(2);
    // Rows B and C share a rear fence (layout.ts): C starts where B ends.
    expect(rect(g, 'C1').y).toBe(rect(g, 'B1').y + rect(g, 'B1').height);
    // Second alley at y = 3 penDepth + 1 alleyWidth = 3.5 units.
    expect(g.bands.filter((band) => band.kind === 'alley')[1]!.y).toBe(35);
  });

  it('offsets everything by the margin', () => {
    const g = barnGeometry(layout(), 10, { left: 20, top: 5, right: 3, bottom: 2 });
    expect(rect(g, 'A1')).toMatchObject({ x: 20, y: 5 });
    expect([g.width, g.height]).toEqual([63, 32]);
  });

  it('marks empty and out-of-use pens with their status', () => {
    const g = barnGeometry(layout({ empty: ['B4'], outOfUse: ['A2'] }), 10);
    expect(rect(g, 'B4').status).toBe('empty');
    expect(rect(g, 'A2').status).toBe('out-of-use');
    expect(g.pens.filter((pen) => pen.status === 'in-use')).toHaveLength(6);
  });

  it('refuses a scale that is not positive', () => {
    expect(() => barnGeometry(layout(), 0)).toThrow(RangeError);
    expect(() => barnGeometry(layout(), 0)).toThrow('`scale` must be a number > 0, got 0');
  });
});

describe('renderBarnMap', () => {
  const barn = { id: 'F1', name: 'Finisher 1', layout: layout({ empty: ['B4'], outOfUse: ['A2'] }) };
  const results = new Map<string, PenMark>([
    ['A1', { resultClass: 'positive', load: 14 }],
    ['A3', { resultClass: 'negative', load: 0 }],
    ['B1', { resultClass: 'suspect', load: 2 }],
    ['B2', { resultClass: 'invalid', load: 0 }],
  ]);
  const svg = renderBarnMap(barn, {
    key: 'test',
    scale: 30,
    detail: 'full',
    title: 'test map',
    results,
    clusters: [{ index: 1, pens: ['A1', 'B1'] }],
  });
  const count = (pattern: RegExp) => (svg.match(pattern) ?? []).length;

  it('draws one element per pen, with data attributes for positives and status', () => {
    expect(count(/data-pen="/g)).toBe(8);
    expect(count(/data-positive=""/g)).toBe(1);
    expect(svg).toMatch(/data-pen="A1" data-status="in-use" data-result="positive" data-positive=""/);
  });

  it('hatches empty pens and cross-hatches out-of-use pens', () => {
    expect(svg).toMatch(/data-pen="B4" data-status="empty"[\s\S]*?fill="url\(#test-empty\)"/);
    expect(svg).toMatch(/data-pen="A2" data-status="out-of-use"[\s\S]*?fill="url\(#test-out\)"/);
  });

  it('gives positives a heavy outline and suspect and invalid pens a symbol', () => {
    expect(svg).toMatch(/data-pen="A1"[\s\S]*?stroke="#000000" stroke-width="3\.2"/);
    expect(svg).toMatch(/data-pen="B1"[\s\S]*?>\?<\/text>/);
    expect(svg).toMatch(/data-pen="B2"[\s\S]*?>\u00d7<\/text>/);
  });

  it('draws a box around each cluster', () => {
    expect(count(/data-cluster="1"/g)).toBe(1);
  });

  it('leaves a hole in its pieces at every place the map names its own ids, and only there', () => {
    const pieces = barnMapPieces(barn, { scale: 30, detail: 'full', title: 'test map', results });
    // aria-labelledby, the title's id, the two patterns' ids and the fills of B4 (empty) and A2 (out of use).
    expect(count(/aria-labelledby="test-|id="test-|url\(#test-/g)).toBe(6);
    expect(pieces).toHaveLength(7);
    for (const piece of pieces) expect(piece).not.toContain('test-');
  });

  it('draws the same map from its pieces as with the key, whatever the key', () => {
    fc.assert(
      fc.property(fc.string(), fc.constantFrom<'full' | 'mini'>('full', 'mini'), (key, detail) => {
        const options = {
          scale: 12,
          detail,
          title: `map <${key}>`,
          results,
          clusters: [{ index: 1, pens: ['A1', 'B1'] }],
        };
        const drawn = renderBarnMap(barn, { key, ...options });
        expect(barnMapPieces(barn, options).join(safeId(key))).toBe(drawn);
        expect(drawn).toContain(`aria-labelledby="${safeId(key)}-title"`);
        expect(drawn).toContain(`fill="url(#${safeId(key)}-empty)"`);
      }),
      { numRuns: 50 },
    );
  });
});
