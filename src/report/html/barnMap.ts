/**
 * Barn maps drawn from the real layout: pens to scale from the layout's pen centres (x along the
 * alley, y across it, in pen units) and its penWidth/penDepth, the alleys between facing rows,
 * cross-alley gaps, and empty or out-of-use pens hatched. The geometry is a pure function of
 * the layout (tested on its own); the renderer only paints it.
 */
import { expandLayout, isInUse, type BarnLayout, type PenStatus } from '../../domain/layout.js';
import { COLOURS } from './palette.js';
import { fmt, penPieces } from './mapPen.js';
import { keptFor } from '../../util/kept.js';
import { escapeHtml, safeId } from './escape.js';
import type { PenMark, PlannedMark } from './mapPen.js';

export type { PenMark, PlannedMark } from './mapPen.js';

export interface MapMargin {
  left: number;
  top: number;
  right: number;
  bottom: number;
}

export interface PenRect {
  id: string;
  row: number;
  rowLabel: string;
  position: number;
  status: PenStatus;
  /** Top-left corner and size in map pixels. */
  x: number;
  y: number;
  width: number;
  height: number;
}

export interface BandRect {
  kind: 'alley' | 'gap';
  x: number;
  y: number;
  width: number;
  height: number;
}

export interface BarnGeometry {
  /** Whole drawing in pixels, margins included. */
  width: number;
  height: number;
  /** Pixels per pen unit. */
  scale: number;
  pens: PenRect[];
  /** Alleys between facing rows and cross-alley gaps along the rows. */
  bands: BandRect[];
  /** Where to write each row's label (left margin, vertically centred on the row). */
  rowLabels: { row: number; label: string; x: number; y: number }[];
}

/**
 * Map geometry of a barn layout: one rectangle per pen, centred on the layout's pen centre
 * (x along the alley, y across it; row 0 at the top, so row B of a two-row barn lies below the
 * alley), width penWidth and height penDepth, all times `scale` pixels per pen unit and shifted
 * by the margin. Alley k (between rows 2k-2 and 2k-1) spans the barn length at
 * y = (2k-1) penDepth + (k-1) alleyWidth; a gap after position p spans all rows at
 * x = p penWidth + (gaps before) gapWidth.
 * @param layout a barn layout (validated by expandLayout)
 * @param scale pixels per pen unit, > 0
 * @param margin pixels around the barn (row labels go in the left margin)
 * @throws RangeError for a bad scale or margin, or any layout error of expandLayout
 * @see src/domain/layout.ts (the coordinates this draws)
 */
export function barnGeometry(
  layout: BarnLayout,
  scale: number,
  margin: MapMargin = { left: 0, top: 0, right: 0, bottom: 0 },
): BarnGeometry {
  if (!Number.isFinite(scale) || scale <= 0) throw new RangeError(`\`scale\` must be a number > 0, got ${scale}`);
  for (const [side, value] of Object.entries(margin)) {
    if (!Number.isFinite(value) || value < 0)
      throw new RangeError(`\`margin.${side}\` must be a number >= 0, got ${value}`);
  }
  const pens = expandLayout(layout);
  const { penWidth, penDepth, alleyWidth, gapWidth } = layout;
  const gaps = [...new Set(layout.gapsAfter)]
    .filter((after) => after >= 1 && after < layout.pensPerRow)
    .sort((a, b) => a - b);
  const lengthUnits = layout.pensPerRow * penWidth + gaps.length * gapWidth;
  const alleys = Math.floor(layout.rows / 2);
  const depthUnits = layout.rows * penDepth + alleys * alleyWidth;
  const px = (units: number) => units * scale;
  const rects: PenRect[] = pens.map((pen) => ({
    id: pen.id,
    row: pen.row,
    rowLabel: pen.rowLabel,
    position: pen.position,
    status: pen.status,
    x: margin.left + px(pen.x - penWidth / 2),
    y: margin.top + px(pen.y - penDepth / 2),
    width: px(penWidth),
    height: px(penDepth),
  }));
  const bands: BandRect[] = [];
  for (let k = 1; k <= alleys; k++) {
    if (alleyWidth <= 0) break;
    bands.push({
      kind: 'alley',
      x: margin.left,
      y: margin.top + px((2 * k - 1) * penDepth + (k - 1) * alleyWidth),
      width: px(lengthUnits),
      height: px(alleyWidth),
    });
  }
  gaps.forEach((after, index) => {
    if (gapWidth <= 0) return;
    bands.push({
      kind: 'gap',
      x: margin.left + px(after * penWidth + index * gapWidth),
      y: margin.top,
      width: px(gapWidth),
      height: px(depthUnits),
    });
  });
  const rowLabels = layout.rowLabels.map((label, row) => {
    const first = rects.find((rect) => rect.row === row)!;
    return { row, label, x: margin.left / 2, y: first.y + first.height / 2 };
  });
  return {
    width: margin.left + px(lengthUnits) + margin.right,
    height: margin.top + px(depthUnits) + margin.bottom,
    scale,
    pens: rects,
    bands,
    rowLabels,
  };
}

export interface MapOptions {
  /** Unique within the page: used for pattern ids. */
  key: string;
  scale: number;
  /** 'full' draws pen labels and symbols; 'mini' only fills and outlines. */
  detail: 'full' | 'mini';
  /** Accessible title of the drawing. */
  title: string;
  /** Each roped pen's mark; not changed once drawn (the pens drawn are kept per marks map: see penLayer). */
  results?: ReadonlyMap<string, PenMark>;
  planned?: ReadonlyMap<string, PlannedMark>;
  clusters?: readonly { index: number; pens: readonly string[] }[];
  /** Extra attributes on the <svg> (already safe names; values are escaped). */
  attributes?: Readonly<Record<string, string>>;
}

const ROW_LABEL_SIZE = 12;
const CLUSTER_LABEL_SIZE = 10;

/**
 * A generous estimate of the width of bold text in a sans-serif face, in pixels: wide letters
 * (M, W, m, w) 1.05 em, other capitals 0.8 em, the rest 0.65 em. Common practice, no source: the
 * maps place labels with it before any browser measures them, so it errs wide.
 */
export function textWidth(text: string, fontSize: number): number {
  let em = 0;
  for (const char of text) em += /[MWmw]/.test(char) ? 1.05 : char !== char.toLowerCase() ? 0.8 : 0.65;
  return em * fontSize;
}

const overlaps = (
  a: { x: number; y: number; width: number; height: number },
  b: { x: number; y: number; width: number; height: number },
) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;

/** The hatching patterns of the map, as the text between the places the map's id prefix goes. */
const PATTERN_DEFS: readonly string[] = [
  `<defs><pattern id="`,
  `-empty" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#8a8a8a" stroke-width="1.6"/></pattern>` +
    `<pattern id="`,
  `-out" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#5f5f5f" stroke-width="1.6"/><line x1="0" y1="0" x2="6" y2="0" stroke="#5f5f5f" stroke-width="1.6"/></pattern>` +
    `</defs>`,
];

type ClusterBox = {
  index: number;
  x0: number;
  y0: number;
  x1: number;
  y1: number;
  label: string;
  labelX: number;
  labelY: number;
  labelBox: { x: number; y: number; width: number; height: number };
};

/** The rounded box around each cluster's pens, with where its label goes. */
function clusterBoxes(geometry: BarnGeometry, clusters: MapOptions['clusters'], full: boolean): ClusterBox[] {
  const byId = new Map(geometry.pens.map((pen) => [pen.id, pen]));
  return (clusters ?? []).flatMap((cluster) => {
    const members = cluster.pens.map((id) => byId.get(id)).filter((pen): pen is PenRect => pen !== undefined);
    if (members.length === 0) return [];
    const pad = full ? 3 : 1.5;
    const x0 = Math.min(...members.map((pen) => pen.x)) - pad;
    const y0 = Math.min(...members.map((pen) => pen.y)) - pad;
    const x1 = Math.max(...members.map((pen) => pen.x + pen.width)) + pad;
    const y1 = Math.max(...members.map((pen) => pen.y + pen.height)) + pad;
    const label = `C${cluster.index}`;
    const labelY = Math.max(9, y0 - 3);
    const labelBox = {
      x: x0 + 2,
      y: labelY - CLUSTER_LABEL_SIZE,
      width: textWidth(label, CLUSTER_LABEL_SIZE),
      height: CLUSTER_LABEL_SIZE + 3,
    };
    return [{ index: cluster.index, x0, y0, x1, y1, label, labelX: x0 + 2, labelY, labelBox }];
  });
}

/** "alley" in each alley tall enough for it, where no cluster label covers it; the row labels in the margin. */
function alleyAndRowLabels(geometry: BarnGeometry, boxes: readonly ClusterBox[]): string[] {
  const parts: string[] = [];
  for (const alley of geometry.bands.filter((band) => band.kind === 'alley')) {
    if (alley.height < 9) continue;
    const size = Math.min(10, alley.height * 0.75);
    const width = textWidth('alley', size);
    // Left end first, then the right end, then the middle: the first place no cluster label covers.
    const candidates = [alley.x + 4, alley.x + alley.width - 4 - width, alley.x + (alley.width - width) / 2];
    const box = (x: number) => ({ x, y: alley.y + alley.height / 2 - size / 2, width, height: size });
    const x =
      candidates.find((candidate) => boxes.every((cluster) => !overlaps(box(candidate), cluster.labelBox))) ?? null;
    if (x === null) continue;
    parts.push(
      `<text class="alley-label" x="${fmt(x)}" y="${fmt(alley.y + alley.height / 2)}" dominant-baseline="central" font-size="${fmt(size)}" fill="${COLOURS.muted}">alley</text>`,
    );
  }
  for (const label of geometry.rowLabels) {
    parts.push(
      `<text class="row-label" x="${fmt(label.x)}" y="${fmt(label.y)}" text-anchor="middle" dominant-baseline="central" font-size="${ROW_LABEL_SIZE}" font-weight="700" fill="${COLOURS.ink}">${escapeHtml(label.label)}</text>`,
    );
  }
  return parts;
}

/** A cluster's dashed box, labelled on the full map. */
function clusterBox(cluster: ClusterBox, full: boolean): string {
  return (
    `<g class="cluster" data-cluster="${cluster.index}"><rect x="${fmt(cluster.x0)}" y="${fmt(cluster.y0)}" width="${fmt(cluster.x1 - cluster.x0)}" height="${fmt(cluster.y1 - cluster.y0)}" rx="${full ? 8 : 3}" fill="none" stroke="${COLOURS.cluster}" stroke-width="${full ? 2 : 1.2}" stroke-dasharray="${full ? '7 3' : '3 2'}"/>` +
    (full
      ? `<text class="cluster-label" x="${fmt(cluster.labelX)}" y="${fmt(cluster.labelY)}" font-size="${CLUSTER_LABEL_SIZE}" font-weight="700" fill="${COLOURS.ink}">${cluster.label}</text>`
      : '') +
    `</g>`
  );
}

/**
 * The geometry a map of `layout` is drawn on, by scale and detail. A page draws the same barn
 * many times (each assay, each earlier round as a small map), so geometries are kept per layout
 * object, scale and detail. A layout is not changed once loaded (the configuration builds a new
 * one on every load; a changed copy is a new object); renderBarnMap only reads the geometry.
 */
const GEOMETRIES = new WeakMap<BarnLayout, Map<string, BarnGeometry>>();

function mapGeometry(layout: BarnLayout, scale: number, full: boolean): BarnGeometry {
  let byView = GEOMETRIES.get(layout);
  if (!byView) {
    byView = new Map();
    GEOMETRIES.set(layout, byView);
  }
  const key = `${scale}/${full}`;
  let geometry = byView.get(key);
  if (!geometry) {
    // The left margin holds the row labels whole ("West", "Middle"), 5 px either side.
    const labelRoom = Math.max(...layout.rowLabels.map((label) => textWidth(label, ROW_LABEL_SIZE))) + 10;
    const margin = full
      ? { left: Math.max(26, Math.ceil(labelRoom)), top: 18, right: 8, bottom: 8 }
      : { left: 10, top: 4, right: 4, bottom: 4 };
    geometry = barnGeometry(layout, scale, margin);
    byView.set(key, geometry);
  }
  return geometry;
}

/**
 * Text with holes where a map's id prefix goes (the ids of its title and hatching patterns, and
 * the hatched pens' fills), written as the pieces between them: joined with a prefix, the pieces
 * are the text drawn with that prefix. A map drawn once is reused under another key this way.
 */
class PrefixedText {
  /** The text between holes so far, each as its parts (joined once, in `pieces`). */
  private readonly segments: string[][] = [[]];

  /** Appends text without a hole. */
  text(text: string): void {
    this.segments[this.segments.length - 1]!.push(text);
  }

  /** Appends pieces that have holes between them. */
  append(pieces: readonly string[]): void {
    this.text(pieces[0]!);
    for (let i = 1; i < pieces.length; i++) this.segments.push([pieces[i]!]);
  }

  /** The text between the holes, each piece one flat string. */
  pieces(): string[] {
    return this.segments.map((parts) => parts.join(''));
  }
}

/**
 * Appends a map drawn as pieces (barnMapPieces) to a page's parts, with the prefix of the key it
 * is placed under in each hole: the same text as the pieces joined with the prefix, without
 * copying the map into a string of its own first.
 */
export function pushMapPieces(into: string[], pieces: readonly string[], prefix: string): void {
  into.push(pieces[0]!);
  for (let i = 1; i < pieces.length; i++) into.push(prefix, pieces[i]!);
}

/**
 * An in-use pen without a result or a planned rope looks the same on every map drawn from one
 * geometry (the map's key only names the hatching of empty and out-of-use pens, and the font
 * size follows the geometry's scale), and most pens of most maps are such pens: each is drawn
 * once per geometry pen (mapGeometry keeps the geometries, so their pens live as long).
 */
const UNMARKED = new WeakMap<PenRect, string>();

function unmarkedPen(pen: PenRect, full: boolean, fontSize: number): string {
  return keptFor(UNMARKED, pen, () => penPieces(pen, undefined, undefined, { full, fontSize })[0]!);
}

/**
 * Pen layers already drawn, by the marks they show and the geometry they are drawn on: a round's
 * small map appears on the pages of the rounds after it with the same marks (resultMarks gives
 * the same map back). Only layers of barns whose pens are all in use are kept: the hatching of
 * an empty or out-of-use pen names the map's own key.
 */
const LAYERS = new WeakMap<ReadonlyMap<string, PenMark>, WeakMap<BarnGeometry, string>>();

/** Every pen of the map, drawn (penPieces), in the geometry's order. */
function penLayer(geometry: BarnGeometry, options: Omit<MapOptions, 'key'>, full: boolean, into: PrefixedText): void {
  const { results, planned } = options;
  const keep = results !== undefined && planned === undefined && geometry.pens.every((pen) => isInUse(pen));
  const known = keep ? LAYERS.get(results)?.get(geometry) : undefined;
  if (known !== undefined) {
    into.text(known);
    return;
  }
  const fontSize = Math.max(7, Math.min(11, options.scale * 0.3));
  // A layer kept is drawn apart and joined once; any other goes straight into the map.
  const layer = keep ? new PrefixedText() : into;
  for (const pen of geometry.pens) {
    const result = results?.get(pen.id);
    const plannedMark = planned?.get(pen.id);
    if (result === undefined && plannedMark === undefined && isInUse(pen)) layer.text(unmarkedPen(pen, full, fontSize));
    else layer.append(penPieces(pen, result, plannedMark, { full, fontSize }));
  }
  if (keep) {
    const drawn = layer.pieces()[0]!;
    keptFor(LAYERS, results, () => new WeakMap()).set(geometry, drawn);
    into.text(drawn);
  }
}

/**
 * Renders a barn map as an inline SVG string: alley and gaps in grey, pens to scale, roped pens
 * filled by load on the single-hue ramp with a symbol (+ positive, ? suspect, × invalid,
 * − negative), positives with a heavy black outline, empty pens hatched, out-of-use pens
 * cross-hatched, clusters as rounded boxes around their pens, planned ropes as a shape by reason
 * (circle routine, triangle follow-up, diamond retest) with the checklist number.
 * Each pen carries data-pen, and data-positive / data-planned / data-status where they apply.
 * @throws RangeError as barnGeometry, or for an unknown load
 */
export function renderBarnMap(barn: { id: string; name: string; layout: BarnLayout }, options: MapOptions): string {
  return barnMapPieces(barn, options).join(safeId(options.key));
}

/**
 * The map renderBarnMap draws, as the pieces between the places its id prefix (the safeId of
 * the key) goes: joined with safeId(key) they are the map drawn with that key, so a map drawn
 * once can be placed again under another key.
 * @throws RangeError as renderBarnMap
 */
export function barnMapPieces(
  barn: { id: string; name: string; layout: BarnLayout },
  options: Omit<MapOptions, 'key'>,
): readonly string[] {
  const full = options.detail === 'full';
  const geometry = mapGeometry(barn.layout, options.scale, full);
  const svg = new PrefixedText();
  let attrs = '';
  for (const [name, value] of Object.entries(options.attributes ?? {})) attrs += ` ${name}="${escapeHtml(value)}"`;
  svg.append([
    `<svg xmlns="http://www.w3.org/2000/svg" class="map map-${options.detail}" viewBox="0 0 ${fmt(geometry.width)} ${fmt(geometry.height)}" width="${fmt(geometry.width)}" height="${fmt(geometry.height)}" role="img" aria-labelledby="`,
    `-title" data-barn="${escapeHtml(barn.id)}"${attrs}><title id="`,
    `-title">${escapeHtml(options.title)}</title>`,
  ]);
  svg.append(PATTERN_DEFS);
  svg.text(bandsOf(geometry));
  const boxes = clusterBoxes(geometry, options.clusters, full);
  if (full) svg.text(alleyAndRowLabels(geometry, boxes).join(''));
  penLayer(geometry, options, full, svg);
  for (const cluster of boxes) svg.text(clusterBox(cluster, full));
  svg.text('</svg>');
  return svg.pieces();
}

/** The alley and gaps of a geometry, drawn once per geometry (mapGeometry keeps them). */
const BANDS = new WeakMap<BarnGeometry, string>();

function bandsOf(geometry: BarnGeometry): string {
  return keptFor(BANDS, geometry, () => {
    let svg = '';
    for (const band of geometry.bands) {
      svg += `<rect class="${band.kind}" data-${band.kind}="" x="${fmt(band.x)}" y="${fmt(band.y)}" width="${fmt(band.width)}" height="${fmt(band.height)}" fill="${COLOURS.alley}"/>`;
    }
    return svg;
  });
}
