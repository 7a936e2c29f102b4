/**
 * Barn layouts: pens in rows along alleys, turned into stable pen identities (what is painted
 * on the gate), coordinates in pen units, and the physical contacts between pens.
 *
 * Coordinates: x runs along the alley (pen centre, one pen width = `penWidth` units), y across it.
 * Rows are paired across alleys: rows 0|1 face each other across alley 1, rows 2|3 across alley 2;
 * rows 1 and 2 stand back to back and share a rear fence.
 */

export type PenNumbering =
  /** Row label then position: A1..A20, B1..B20. */
  | 'per-row'
  /** One count through the barn, every row left to right: 1..20, 21..40. */
  | 'continuous'
  /** One count down the first row and back up the next, so 20 faces 21: 1..20, 40..21. */
  | 'serpentine';

export type PenStatus = 'in-use' | 'empty' | 'out-of-use';

export interface BarnLayout {
  /** Rows of pens, 1 to 4. */
  rows: number;
  pensPerRow: number;
  numbering: PenNumbering;
  /** One label per row, also the name of that side of the alley (e.g. A, B or North, South). */
  rowLabels: string[];
  /** Digits to pad pen numbers to ("A01"); 0 for no padding. */
  padDigits: number;
  /** Pen width along the alley, in pen units (usually 1). */
  penWidth: number;
  /** Pen depth across the alley, in pen units. */
  penDepth: number;
  /** Alley width in pen units. */
  alleyWidth: number;
  /** Cross-alleys or walls: a gap of `gapWidth` after these 1-based positions along the row. */
  gapsAfter: number[];
  gapWidth: number;
  /** Pen ids with no pigs in them now. */
  empty: string[];
  /** Pen ids not used for production (hospital, broken). */
  outOfUse: string[];
  /** Head count per pen; `default` applies to every pen not named. */
  headCount?: { default?: number; pens?: Record<string, number> };
}

export interface Pen {
  id: string;
  row: number;
  rowLabel: string;
  /** 0-based position along the alley. */
  position: number;
  /** Centre in barn coordinates (pen units). */
  x: number;
  y: number;
  status: PenStatus;
  headCount?: number;
}

export interface PenContacts {
  /** Same row, sharing a divider (no gap between). Also rear fences of back-to-back rows. */
  fence: [string, string][];
  /** The pen straight across the alley. */
  facing: [string, string][];
  /** The pens one position along, across the alley. */
  diagonal: [string, string][];
}

/** True when the pen holds pigs now: an empty or out-of-use pen holds none, nor a pen not in the layout. */
export function isInUse(pen: Pick<Pen, 'status'> | undefined): boolean {
  return pen?.status === 'in-use';
}

/**
 * The pens that hold pigs now, in their order: empty and out-of-use pens are no part of the
 * sampling frame nor of the spatial lattice.
 */
export function inUsePens<T extends Pick<Pen, 'status'>>(pens: readonly T[]): T[] {
  return pens.filter(isInUse);
}

function penNumber(layout: BarnLayout, row: number, position: number): number {
  const perRow = layout.pensPerRow;
  switch (layout.numbering) {
    case 'per-row':
      return position + 1;
    case 'continuous':
      return row * perRow + position + 1;
    case 'serpentine':
      return row % 2 === 0 ? row * perRow + position + 1 : row * perRow + (perRow - position);
  }
}

/** The gate label of the pen at (row, position). */
export function penLabel(layout: BarnLayout, row: number, position: number): string {
  const number = String(penNumber(layout, row, position)).padStart(layout.padDigits, '0');
  return layout.numbering === 'per-row' ? `${layout.rowLabels[row] ?? String(row + 1)}${number}` : number;
}

/** x coordinate of a pen centre along the alley, with gaps. */
function penX(layout: BarnLayout, position: number): number {
  const gapsBefore = layout.gapsAfter.filter((after) => after <= position).length;
  return (position + 0.5) * layout.penWidth + gapsBefore * layout.gapWidth;
}

/** y coordinate of a row's pen centres: alleys between rows 0|1 and 2|3, rear fence between 1|2. */
function rowY(layout: BarnLayout, row: number): number {
  const alleysBefore = Math.floor((row + 1) / 2);
  return (row + 0.5) * layout.penDepth + alleysBefore * layout.alleyWidth;
}

/** Every pen of the barn, in row-then-position order, with its status. Throws on a bad layout. */
export function expandLayout(layout: BarnLayout): Pen[] {
  if (!Number.isInteger(layout.rows) || layout.rows < 1 || layout.rows > 4) {
    throw new RangeError(`rows must be an integer in [1, 4], got ${layout.rows}`);
  }
  if (!Number.isInteger(layout.pensPerRow) || layout.pensPerRow < 1) {
    throw new RangeError(`pensPerRow must be a positive integer, got ${layout.pensPerRow}`);
  }
  if (layout.rowLabels.length !== layout.rows) {
    throw new RangeError(`rowLabels must name ${layout.rows} rows, got ${layout.rowLabels.length}`);
  }
  const empty = new Set(layout.empty);
  const outOfUse = new Set(layout.outOfUse);
  const pens: Pen[] = [];
  const seen = new Set<string>();
  for (let row = 0; row < layout.rows; row++) {
    for (let position = 0; position < layout.pensPerRow; position++) {
      const id = penLabel(layout, row, position);
      if (seen.has(id)) throw new RangeError(`pen label ${id} occurs twice; use numbering per-row or continuous`);
      seen.add(id);
      const status: PenStatus = outOfUse.has(id) ? 'out-of-use' : empty.has(id) ? 'empty' : 'in-use';
      const headCount = layout.headCount?.pens?.[id] ?? layout.headCount?.default;
      pens.push({
        id,
        row,
        rowLabel: layout.rowLabels[row]!,
        position,
        x: penX(layout, position),
        y: rowY(layout, row),
        status,
        ...(headCount !== undefined ? { headCount } : {}),
      });
    }
  }
  for (const id of [...empty, ...outOfUse]) {
    if (!seen.has(id)) throw new RangeError(`pen ${id} is listed as empty or out of use but is not in the layout`);
  }
  return pens;
}

/**
 * Physical contacts between all pens of the layout (whatever their status; callers drop empty
 * and out-of-use pens before building weights). A gap along the row breaks the fence line.
 */
export function penContacts(layout: BarnLayout, pens: readonly Pen[] = expandLayout(layout)): PenContacts {
  const at = new Map<string, Pen>();
  for (const pen of pens) at.set(`${pen.row}:${pen.position}`, pen);
  const get = (row: number, position: number) => at.get(`${row}:${position}`);
  const gap = new Set(layout.gapsAfter);
  const contacts: PenContacts = { fence: [], facing: [], diagonal: [] };
  for (const pen of pens) {
    const next = get(pen.row, pen.position + 1);
    if (next && !gap.has(pen.position + 1)) contacts.fence.push([pen.id, next.id]);
    if (pen.row % 2 === 0) {
      const across = pen.row + 1;
      const facing = get(across, pen.position);
      if (facing) contacts.facing.push([pen.id, facing.id]);
      for (const delta of [-1, 1]) {
        const diagonal = get(across, pen.position + delta);
        const crossesGap = delta === 1 ? gap.has(pen.position + 1) : gap.has(pen.position);
        if (diagonal && !crossesGap) contacts.diagonal.push([pen.id, diagonal.id]);
      }
    } else {
      const behind = get(pen.row + 1, pen.position);
      if (behind) contacts.fence.push([pen.id, behind.id]);
    }
  }
  return contacts;
}

/** How a pen label is compared: capitals, no spaces, no leading zeros in numbers ("a01" = "A1"). */
export function canonicalPenKey(raw: string): string {
  return raw
    .replace(/\s+/g, '')
    .toUpperCase()
    .replace(/\d+/g, (digits) => String(Number(digits)));
}

/** Pens by their canonical key (see canonicalPenKey), for matching labels as people write them. */
export function pensByKey(pens: readonly Pen[]): ReadonlyMap<string, Pen> {
  return new Map(pens.map((pen) => [canonicalPenKey(pen.id), pen]));
}

/** Euclidean distance between pen centres, in pen units. */
export function penDistance(a: Pick<Pen, 'x' | 'y'>, b: Pick<Pen, 'x' | 'y'>): number {
  return Math.hypot(a.x - b.x, a.y - b.y);
}
