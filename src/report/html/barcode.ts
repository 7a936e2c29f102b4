/**
 * A sample ID as a Code 128 barcode, drawn as inline SVG, so that the lab scans the tube label or
 * the checklist line instead of typing the ID. Code 128 rather than a 2-D symbol: every
 * hand-held scanner reads it, laser and imager alike (common practice, no source). Encoded by
 * code128.ts (the code sets and check character of the standard) and drawn here from the bar
 * widths. The same ID gives the same bytes.
 * @see ISO/IEC 15417:2007, Information technology - Automatic identification and data capture
 *   techniques - Code 128 bar code symbology specification.
 */
import { code128Elements } from './code128.js';
import { escapeHtml } from './escape.js';

export interface BarcodeOptions {
  /** Width of the narrowest bar (the X dimension) in millimetres. */
  moduleMm?: number;
  /** Height of the bars in millimetres. */
  heightMm?: number;
}

/**
 * 0.25 mm is about six dots of a 600 dpi office laser printer, wide enough for a general-purpose
 * scanner at arm's length (common practice, no source).
 */
export const DEFAULT_MODULE_MM = 0.25;
export const DEFAULT_HEIGHT_MM = 8;
/** ISO/IEC 15417 section 4.3.3: a quiet zone of at least 10 X on either side. */
export const QUIET_ZONE_MODULES = 10;

/**
 * The Code 128 symbol of `text` (quiet zones included) as an SVG element sized in millimetres:
 * one SVG unit per module, a rectangle per bar.
 * @param text printable ASCII (a sample ID)
 * @throws RangeError for an empty text, characters outside printable ASCII, or sizes that are
 *   not positive
 */
export function code128Svg(text: string, options: BarcodeOptions = {}): string {
  const moduleMm = options.moduleMm ?? DEFAULT_MODULE_MM;
  const heightMm = options.heightMm ?? DEFAULT_HEIGHT_MM;
  if (!(moduleMm > 0) || !(heightMm > 0))
    throw new RangeError(`\`moduleMm\` and \`heightMm\` must be positive, got ${moduleMm} and ${heightMm}`);
  if (!/^[\x20-\x7e]+$/.test(text))
    throw new RangeError(`\`text\` must be printable ASCII, got ${JSON.stringify(text)}`);
  const elements = code128Elements(text);
  let x = QUIET_ZONE_MODULES;
  let bars = '';
  elements.forEach((width, index) => {
    if (index % 2 === 0) bars += `M${x} 0h${width}v1h-${width}z`;
    x += width;
  });
  const width = x + QUIET_ZONE_MODULES;
  const widthMm = Math.round(width * moduleMm * 1000) / 1000;
  return (
    `<svg class="barcode" data-code128="${escapeHtml(text)}" role="img" aria-label="${escapeHtml(text)}" xmlns="http://www.w3.org/2000/svg" ` +
    `viewBox="0 0 ${width} 1" width="${widthMm}mm" height="${heightMm}mm" preserveAspectRatio="none" shape-rendering="crispEdges">` +
    `<rect width="${width}" height="1" fill="#ffffff"/><path fill="#000000" d="${bars}"/></svg>`
  );
}
