/**
 * The geometry of a round's roped pens: their points, spatial weights and rope spacing, and the
 * site's join-count blocks. It depends on the barn layout and on which pens were roped, never on
 * their results; a systematic rotation comes back to the same few rope sets round after round
 * and assay after assay, so a cache makes each set's geometry once and hands it out frozen. The
 * structures derived from frozen weights and points (join graph, weight constants, scan windows)
 * are kept by their identity in their own modules, so they too are made once per rope set.
 *
 * A cache lives as long as its owner keeps it (one site's build): nothing is kept beyond it.
 */
import { expandLayout, type BarnLayout, type Pen } from '../domain/layout.js';
import {
  contactWeights,
  defaultWeights,
  distanceBandWeights,
  knnWeights,
  listWeights,
  ropeSpacing,
  weightsFromEdges,
  type SpatialPoint,
  type SpatialWeights,
  type WeightChoice,
  type WeightStyle,
} from './weights.js';
import { keptFor } from '../util/kept.js';

/** Every pen of a layout (expandLayout) and the pens by id. */
export interface LayoutGeometry {
  readonly pens: readonly Pen[];
  readonly byId: ReadonlyMap<string, Pen>;
}

/** Weights of one choice and style among a rope set, with the band of a distance band (else null). */
export interface ChosenWeights {
  readonly w: SpatialWeights;
  readonly band: number | null;
}

/** The geometry of one set of roped pens of a layout, in the order the pens were given. */
export interface RopeSetGeometry {
  /** Identifies the rope set within its cache (layout and pens). */
  readonly key: string;
  /** The roped pens as frozen points (barn coordinates). */
  readonly points: readonly SpatialPoint[];
  /** The weights of `choice` in `style` among the points (made on the first request). */
  weights(choice: WeightChoice, style: WeightStyle): ChosenWeights;
  /** ropeSpacing of the points (made on the first request). @throws RangeError for fewer than 2 pens. */
  spacing(): number;
}

/** One barn's share of the site's join-count weights. */
export interface SiteBlock {
  barn: string;
  /** The barn's stratum: positives are permuted within it. */
  stratum: number;
  geometry: RopeSetGeometry;
}

/** The site's join-count weights (each barn's binary weights a separate block) and each pen's stratum. */
export interface SiteBlocks {
  readonly w: SpatialWeights;
  readonly strata: readonly number[];
}

function buildWeights(
  layout: BarnLayout,
  points: readonly SpatialPoint[],
  choice: WeightChoice,
  style: WeightStyle,
): ChosenWeights {
  switch (choice.kind) {
    case 'default':
      return { w: defaultWeights(points, style), band: null };
    case 'contact':
      return {
        w: contactWeights(
          layout,
          points.map((q) => q.id),
          choice.convention,
          style,
        ),
        band: null,
      };
    case 'knn':
      return { w: knnWeights(points, choice.k, style), band: null };
    case 'band':
      return { w: distanceBandWeights(points, choice.band, style, choice.power ?? 0), band: choice.band };
    case 'lists':
      return {
        w: listWeights(
          points.map((q) => q.id),
          choice.neighbours,
          style,
        ),
        band: null,
      };
  }
}

function makeRopeSet(key: string, layout: BarnLayout, pens: readonly Pen[]): RopeSetGeometry {
  const points: readonly SpatialPoint[] = Object.freeze(
    pens.map((pen) => Object.freeze({ id: pen.id, x: pen.x, y: pen.y })),
  );
  const weights = new Map<string, ChosenWeights>();
  let spacing: number | undefined;
  return Object.freeze({
    key,
    points,
    weights(choice: WeightChoice, style: WeightStyle): ChosenWeights {
      return keptFor(weights, `${style} ${JSON.stringify(choice)}`, () =>
        Object.freeze(buildWeights(layout, points, choice, style)),
      );
    },
    spacing(): number {
      spacing ??= ropeSpacing(points);
      return spacing;
    },
  });
}

/**
 * Hands out the geometry of layouts and rope sets, each made once. Layouts are told apart by
 * identity (a layout must not change while a cache holds it), rope sets by their pens' ids in
 * order.
 */
export class GeometryCache {
  private readonly layouts = new Map<BarnLayout, { geometry: LayoutGeometry; serial: number }>();
  private readonly ropeSets = new Map<string, RopeSetGeometry>();
  private readonly siteBlocks = new Map<string, SiteBlocks>();

  /** Every pen of `layout` and the pens by id. @throws RangeError on a bad layout (expandLayout). */
  layout(layout: BarnLayout): LayoutGeometry {
    return this.layoutEntry(layout).geometry;
  }

  private layoutEntry(layout: BarnLayout): { geometry: LayoutGeometry; serial: number } {
    return keptFor(this.layouts, layout, () => {
      const pens = Object.freeze(expandLayout(layout).map((pen) => Object.freeze(pen)));
      const geometry = Object.freeze({ pens, byId: new Map(pens.map((pen) => [pen.id, pen])) });
      return { geometry, serial: this.layouts.size };
    });
  }

  /**
   * The geometry of the roped pens `penIds` of `layout`, in that order.
   * @throws RangeError naming a pen not in the layout, or on a bad layout.
   */
  ropeSet(layout: BarnLayout, penIds: readonly string[]): RopeSetGeometry {
    const { geometry, serial } = this.layoutEntry(layout);
    const key = `${serial} ${JSON.stringify(penIds)}`;
    return keptFor(this.ropeSets, key, () => {
      const pens = penIds.map((id) => {
        const pen = geometry.byId.get(id);
        if (!pen) throw new RangeError(`\`pens\` must name pens of the layout, got ${id}`);
        return pen;
      });
      return makeRopeSet(key, layout, pens);
    });
  }

  /**
   * The site's join-count weights: each block's binary weights of `choice`, kept apart (no join
   * between barns), pens named `barn/pen`, then restyled as `style`.
   * @throws RangeError for fewer than 1 pen in all.
   */
  siteWeights(blocks: readonly SiteBlock[], choice: WeightChoice, style: WeightStyle): SiteBlocks {
    const key = `${style} ${JSON.stringify(choice)} ${JSON.stringify(blocks.map((b) => [b.barn, b.stratum, b.geometry.key]))}`;
    return keptFor(this.siteBlocks, key, () => buildSiteWeights(blocks, choice, style));
  }
}

function buildSiteWeights(blocks: readonly SiteBlock[], choice: WeightChoice, style: WeightStyle): SiteBlocks {
  const ids: string[] = [];
  const strata: number[] = [];
  const edges: [number, number, number][] = [];
  for (const block of blocks) {
    const { w } = block.geometry.weights(choice, 'binary');
    const base = ids.length;
    for (const point of block.geometry.points) {
      ids.push(`${block.barn}/${point.id}`);
      strata.push(block.stratum);
    }
    for (let i = 0; i < w.ids.length; i++)
      for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++)
        edges.push([base + i, base + w.neighbours[a]!, w.weights[a]!]);
  }
  const w = weightsFromEdges(ids, edges, style, `per-barn weights as separate blocks, ${style}`);
  return Object.freeze({ w, strata: Object.freeze(strata) });
}
