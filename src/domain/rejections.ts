/**
 * Every reason ropewatch gives for refusing a file or a row, declared once (ingest refuses, the
 * store keeps the refusals: both read this table). The TypeScript union,
 * the receipts and the README table all come from this list, so they cannot drift apart.
 */
export const REJECTION_CODES = {
  // Whole files
  'duplicate-file': 'the same bytes were stored before (content hash); nothing new to do',
  'empty-file': 'the file holds no bytes or only a header',
  'not-csv': 'the file is not delimited text (binary content or no usable header)',
  'invalid-encoding': 'the bytes are not valid in the declared text encoding',
  'unknown-format': 'the header matches no lab profile and is not a rope sheet',
  'ambiguous-lab':
    'the header or name matches more than one lab profile, or the header reads both as a rope sheet and as a lab export',
  'missing-column': 'a column the lab profile or rope sheet requires is not in the header',
  'duplicate-header': 'two header cells carry the same name, or name the same rope-sheet column',
  'file-read-error': 'the file could not be read',
  'not-a-regular-file':
    'a FIFO, socket, device, folder or a link to one of them: refused from its type, never opened, left where it is',
  'malformed-csv': 'broken quoting or structure: the rows after it cannot be trusted, so the file is refused whole',
  'not-a-workbook':
    'named or shaped like a spreadsheet but not an Office Open XML workbook (.xlsx) that can be opened: not a zip, a damaged one, or another spreadsheet format',
  'workbook-encrypted': 'a password-protected workbook: ropewatch cannot open it without the password',
  'workbook-too-large': 'a workbook beyond the size ropewatch reads whole (file or unpacked parts)',
  'no-such-sheet': 'the lab profile names a sheet the workbook does not have',
  // Rows
  'ragged-row': 'the row has a different number of fields from the header',
  'formula-without-value': 'a workbook cell the row needs holds a formula saved without its calculated value',
  'missing-value': 'a required cell is empty',
  'unknown-assay': 'the lab assay name is not in the lab profile',
  'bad-ct': 'the Ct cell is neither a number nor a configured not-detected token',
  'ct-out-of-range': 'the Ct is outside (0, 60] cycles, or a 0 the lab profile does not declare as not detected',
  'bad-sp': 'the S/P cell of an antibody assay is not a number (an S/P ratio has no not-detected word)',
  'sp-out-of-range': 'the S/P ratio is outside [-1, 10]',
  'bad-date':
    'a date cell does not match the profile date format, or a location-coded sample ID carries an impossible date',
  'unknown-site': 'the site is not in sites.yaml',
  'unknown-barn': 'the barn is not on that site',
  'unknown-pen': 'the pen is not in that barn layout',
  'bad-check-character': 'a planned sample ID whose check character does not match (mistyped)',
  'pen-twice-same-day': 'a second sample in the same pen on the same day',
  'sample-id-reused': 'the sample ID already names a rope in another pen or on another day',
  'bad-pool':
    "a rope-sheet pool ID that is the rope's own sample ID or names a rope, or a rope whose sample ID names a pool",
  'no-collection-date': 'a sample ID that encodes its pen carries no date and the row has none',
} as const;

export type RejectionCode = keyof typeof REJECTION_CODES;

/** A row refused inside an otherwise accepted file. */
export interface RowRejection {
  line: number;
  field: string | undefined;
  code: RejectionCode;
  value: string | undefined;
  message: string;
  /** For a sample ID that fails its check character: the planned ID it most likely meant. */
  suggestedId?: string;
  /** For a sample ID that fails its check character: every planned ID one keying error away (when there are several). */
  candidateIds?: readonly string[];
}
