/**
 * What kind of input a file is, read from its name and its head: a workbook (opened from exactly
 * the bytes hashed) or delimited text, then which lab profile or rope-sheet layout, and how its
 * text is encoded. Refusals come back as an IngestError value; a file that changed under the
 * reader throws FileStillChangingError.
 */
import type { Config } from '../config/types.js';
import { BinaryContentError, sniffEncoding, type Sniffed } from './decode.js';
import { detectFileKind, type FileKind } from './detect.js';
import { IngestError } from './errors.js';
import { firstBytes, readHead, stillChanging } from './fileOnDisk.js';
import { FileChangedError } from './mappedBatches.js';
import { detectWorkbook, readHashedBytes, workbookNote, type WorkbookKind } from './workbookInput.js';
import { isWorkbookFile, openWorkbook, workbookSizeRefusal, type OpenedWorkbook } from './xlsxReader.js';

export interface InputKind {
  kind: FileKind;
  sniffed: Sniffed;
  /** Set for a workbook: the opened workbook and the sheet found in it. */
  workbook?: { opened: OpenedWorkbook; found: WorkbookKind };
}

/** The bytes ingest read: the file's path and name, its size and hash. */
export interface InputBytes {
  file: string;
  name: string;
  size: number;
  sha256: string;
}

export async function detectInput(input: InputBytes, config: Config): Promise<InputKind | IngestError> {
  return isWorkbookFile(input.name, firstBytes(input.file, 8))
    ? detectWorkbookInput(input, config)
    : detectTextInput(input, config);
}

async function detectWorkbookInput(input: InputBytes, config: Config): Promise<InputKind | IngestError> {
  const { file, name, size, sha256 } = input;
  const tooLarge = workbookSizeRefusal(size, name);
  if (tooLarge) return tooLarge;
  try {
    // Read from exactly the bytes hashed: the workbook parsed is the one the hash names.
    const opened = await openWorkbook(readHashedBytes(file, name, { bytes: size, sha256 }), name);
    const found = detectWorkbook(name, opened, config.labs, config.ropeSheet.columns);
    return {
      kind: found.kind,
      sniffed: { encoding: 'utf-8', bomLength: 0, note: workbookNote(found) },
      workbook: { opened, found },
    };
  } catch (error) {
    if (error instanceof IngestError) return error;
    if (error instanceof FileChangedError) throw stillChanging(error.message);
    throw error;
  }
}

function detectTextInput(input: InputBytes, config: Config): InputKind | IngestError {
  const { file, name, size } = input;
  try {
    // Title lines above the header (the most any lab profile skips), the header, and one more line.
    const linesNeeded = Math.max(0, ...config.labs.map((lab) => lab.skipLines)) + 2;
    const { head, sniffed, text } = readHead(file, size, linesNeeded);
    const kind = detectFileKind(name, text, config.labs, config.ropeSheet.columns);
    // A lab's declared encoding overrules the sniffed one unless a BOM or a byte pattern decided it.
    const declared =
      kind.kind === 'results' &&
      kind.lab.encoding !== 'auto' &&
      sniffed.bomLength === 0 &&
      !sniffed.note.includes('byte pattern');
    return { kind, sniffed: declared ? sniffEncoding(head, kind.lab.encoding) : sniffed };
  } catch (error) {
    if (error instanceof IngestError) return error;
    if (error instanceof BinaryContentError)
      return new IngestError({ code: 'not-csv', file: name, detail: error.message });
    throw error;
  }
}
