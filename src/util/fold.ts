/**
 * How tokens and names are compared: lower-cased, trimmed, inner whitespace folded. Kept apart
 * from the configuration loader so that the ingest's parse worker loads no YAML or schema code.
 */
export function foldToken(text: string): string {
  // Exports repeat the same few words (assay names, "Undetermined", "PASS") on every row.
  const cached = foldedTokens.get(text);
  if (cached !== undefined) return cached;
  const folded = text.trim().replace(/\s+/g, ' ').toLowerCase();
  if (text.length <= 64) {
    if (foldedTokens.size >= 4096) foldedTokens.clear();
    foldedTokens.set(text, folded);
  }
  return folded;
}
const foldedTokens = new Map<string, string>();
