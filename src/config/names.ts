/**
 * Identifiers from the configuration as the rest of ropewatch compares them, and as folder
 * names under outbox/. Light on purpose (no YAML, no schema): pipeline and report code import
 * the outbox's fixed names from here, so a site can never be configured onto one of them.
 */
import { foldToken } from '../util/fold.js';
import { DEFAULT_PLACES, OUTBOX_NAMES } from '../workspacePaths.js';

/** outbox/receipts/: one receipt per file processed. */
export const RECEIPTS_FOLDER = OUTBOX_NAMES.receipts;
/** outbox/index.html: the page listing every site. */
export const INDEX_PAGE = OUTBOX_NAMES.indexPage;
/** Names ropewatch writes at the top of the outbox, beside the site folders. */
export const OUTBOX_FIXED_NAMES: readonly string[] = [RECEIPTS_FOLDER, INDEX_PAGE];

/** Longest site id: it is a folder name, joined with round folders and file names below it. */
export const MAX_FOLDER_ID_LENGTH = 64;

/**
 * The key under which two configured names are the same name: sites, barns, rope-sheet values
 * and CLI options are matched either with foldToken (trimmed, inner whitespace folded, lower
 * case) or in upper case; upper-casing the folded text makes one key equal whenever either is.
 */
export function matchKey(text: string): string {
  return foldToken(text).toUpperCase();
}

/**
 * The site a person or a rope sheet names by its id, its code or its name, compared as matchKey
 * compares them (case and spacing ignored). sites.yaml refuses two sites whose id, code or name
 * would match one another, so at most one site answers.
 */
export function findSite<S extends { id: string; code: string; name: string }>(
  sites: readonly S[],
  text: string,
): S | undefined {
  const key = matchKey(text);
  return sites.find((site) => matchKey(site.id) === key || matchKey(site.code) === key || matchKey(site.name) === key);
}

// Device names Windows reserves in every folder, with or without an extension (Microsoft,
// "Naming Files, Paths, and Namespaces"); COM0 and LPT0 are reserved too in recent versions.
const WINDOWS_DEVICE = /^(CON|PRN|AUX|NUL|COM[0-9¹²³]|LPT[0-9¹²³])(\..*)?$/i;
// Characters Windows refuses in a name (same source), and the path separators everywhere.
const INVALID_CHARACTER = /[<>:"/\\|?*]/;
const CONTROL_CHARACTER = /[\u0000-\u001f\u007f]/;

/**
 * Why `id` cannot be the name of a folder under outbox/ on Linux, macOS and Windows, or
 * undefined when it can. Names are compared as case-insensitive file systems (Windows, macOS)
 * compare them.
 */
export function folderNameProblem(id: string): string | undefined {
  if (id.length === 0) return 'is empty';
  if (id.length > MAX_FOLDER_ID_LENGTH)
    return `is ${id.length} characters long; at most ${MAX_FOLDER_ID_LENGTH} (it names a folder under ${DEFAULT_PLACES.outbox})`;
  if (id === '.' || id === '..') return `"${id}" is not a folder name`;
  if (CONTROL_CHARACTER.test(id)) return 'contains a control character';
  const invalid = INVALID_CHARACTER.exec(id);
  if (invalid)
    return `contains "${invalid[0]}", which cannot be part of a folder name (path separators and < > : " / \\ | ? * are refused)`;
  if (/[ .]$/.test(id)) return 'ends in a space or a dot, which Windows drops from folder names';
  const fixed = OUTBOX_FIXED_NAMES.find((name) => name.toLowerCase() === id.toLowerCase());
  if (fixed !== undefined)
    return `"${id}" is a name ropewatch writes in ${DEFAULT_PLACES.outbox} itself (${fixed}); choose another id`;
  if (WINDOWS_DEVICE.test(id))
    return `"${id}" is a device name Windows reserves (CON, PRN, AUX, NUL, COM0-9, LPT0-9); choose another id`;
  return undefined;
}
