/**
 * The page palette and its contrast arithmetic. One single-hue (blue) sequential ramp for load,
 * light to dark, so it reads in greyscale and for the common colour-vision deficiencies; every
 * other meaning has a second encoding (outline weight, a symbol, hatching).
 */

/** Text and surface colours of the pages. */
export const COLOURS = Object.freeze({
  ink: '#1a1a1a',
  muted: '#4d4d4d',
  paper: '#ffffff',
  panel: '#f3f4f6',
  rule: '#9ca3af',
  link: '#1d4a8f',
  alertInk: '#3d2a00',
  alertPaper: '#fff4d1',
  noticeInk: '#5c0a0a',
  noticePaper: '#fde7e7',
  okInk: '#14452a',
  okPaper: '#e3f4e8',
  alley: '#e6e6e6',
  penStroke: '#6b7280',
  positiveStroke: '#000000',
  cluster: '#111111',
});

/**
 * Load ramp, light to dark: step 0 = roped, nothing detected (load 0); steps 1 to 4 = rising
 * load L = C_max - Ct in bands of 5 cycles. `ink` is the label colour on that fill.
 */
export const LOAD_RAMP: readonly { fill: string; ink: string }[] = Object.freeze([
  { fill: '#eef3fb', ink: '#1a1a1a' },
  { fill: '#c5d6ee', ink: '#1a1a1a' },
  { fill: '#8eaedb', ink: '#1a1a1a' },
  { fill: '#3f6cad', ink: '#ffffff' },
  { fill: '#173a73', ink: '#ffffff' },
]);

/** Width of one load band in cycles (so 4 bands cover 20 cycles below the cycle limit). */
export const LOAD_BAND_CYCLES = 5;

/**
 * Ramp step for a load score L = max(0, C_max - Ct): 0 for L = 0, else ceil(L / 5) capped at 4.
 * @param load load score in cycles, finite and >= 0
 * @throws RangeError when `load` is negative or not finite
 * Load score L = max(0, C_max - Ct) (common practice, no source; nor for the 5-cycle bands).
 */
export function loadStep(load: number): number {
  if (!Number.isFinite(load) || load < 0) throw new RangeError(`\`load\` must be a finite number >= 0, got ${load}`);
  if (load === 0) return 0;
  return Math.min(LOAD_RAMP.length - 1, Math.ceil(load / LOAD_BAND_CYCLES));
}

/**
 * S/P shading: the ramp's steps at multiples of the lab's positive cutoff c, doubling (an ELISA's
 * S/P grows roughly with the logarithm of the antibody level): step 0 below c/2, 1 up to c,
 * 2 up to 2c, 3 up to 4c, 4 from 4c. Common practice, no source: a reading aid, not a call.
 */
export const SP_STEP_MULTIPLES: readonly number[] = Object.freeze([0.5, 1, 2, 4]);

/**
 * Ramp step for an S/P ratio read against a positive cutoff (see SP_STEP_MULTIPLES).
 * @param sp S/P ratio, finite
 * @param positiveAtOrAbove the lab's positive cutoff, > 0
 * @throws RangeError when `sp` is not finite or the cutoff is not > 0
 */
export function spStep(sp: number, positiveAtOrAbove: number): number {
  if (!Number.isFinite(sp)) throw new RangeError(`\`sp\` must be a finite number, got ${sp}`);
  if (!Number.isFinite(positiveAtOrAbove) || positiveAtOrAbove <= 0)
    throw new RangeError(`\`positiveAtOrAbove\` must be a number > 0, got ${positiveAtOrAbove}`);
  let step = 0;
  for (const multiple of SP_STEP_MULTIPLES) if (sp >= multiple * positiveAtOrAbove) step++;
  return step;
}

function channel(hex: string, offset: number): number {
  return parseInt(hex.slice(offset, offset + 2), 16) / 255;
}

/**
 * WCAG 2.x relative luminance of an sRGB colour: each channel c in [0, 1] is linearised as
 * c / 12.92 when c <= 0.03928, else ((c + 0.055) / 1.055)^2.4, and
 * L = 0.2126 R + 0.7152 G + 0.0722 B.
 * @param hex colour as #rrggbb
 * @throws RangeError when `hex` is not #rrggbb
 * @see W3C (2008) Web Content Accessibility Guidelines 2.0, definition "relative luminance".
 */
export function relativeLuminance(hex: string): number {
  if (!/^#[0-9a-fA-F]{6}$/.test(hex)) throw new RangeError(`\`hex\` must be a colour #rrggbb, got ${hex}`);
  const lin = (c: number) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
  return 0.2126 * lin(channel(hex, 1)) + 0.7152 * lin(channel(hex, 3)) + 0.0722 * lin(channel(hex, 5));
}

/**
 * WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05), L1 the lighter; 1 to 21. AA asks 4.5:1
 * for normal text.
 * @throws RangeError when a colour is not #rrggbb
 * @see W3C (2008) Web Content Accessibility Guidelines 2.0, definition "contrast ratio", SC 1.4.3.
 */
export function contrastRatio(foreground: string, background: string): number {
  const a = relativeLuminance(foreground);
  const b = relativeLuminance(background);
  return (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05);
}

/** Every text/background pair the pages use, for the contrast test. */
export const TEXT_PAIRS: readonly { name: string; ink: string; paper: string }[] = Object.freeze([
  { name: 'body text', ink: COLOURS.ink, paper: COLOURS.paper },
  { name: 'muted text', ink: COLOURS.muted, paper: COLOURS.paper },
  { name: 'muted text on panel', ink: COLOURS.muted, paper: COLOURS.panel },
  { name: 'text on panel', ink: COLOURS.ink, paper: COLOURS.panel },
  { name: 'links', ink: COLOURS.link, paper: COLOURS.paper },
  { name: 'links on panel', ink: COLOURS.link, paper: COLOURS.panel },
  { name: 'alert', ink: COLOURS.alertInk, paper: COLOURS.alertPaper },
  { name: 'notifiable notice', ink: COLOURS.noticeInk, paper: COLOURS.noticePaper },
  { name: 'target met', ink: COLOURS.okInk, paper: COLOURS.okPaper },
  { name: 'alley label', ink: COLOURS.muted, paper: COLOURS.alley },
  ...LOAD_RAMP.map((step, index) => ({ name: `pen label on load step ${index}`, ink: step.ink, paper: step.fill })),
  { name: 'pen label on an unroped pen', ink: COLOURS.ink, paper: COLOURS.paper },
]);
