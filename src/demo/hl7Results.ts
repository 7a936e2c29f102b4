/**
 * The invented Brackenridge lab's results as an HL7 v2.5.1 ORU^R01 message (one order per rope:
 * OBR, a Ct observation when the assay detected something, a coded result, then the specimen),
 * as labs/brackenridge.yaml maps them. Written with our own escaping; deterministic: the same rows
 * and moment give the same bytes.
 */
import { DEFAULT_ENCODING, escapeText } from '../hl7/escapes.js';

export interface Hl7DemoRow {
  sampleId: string;
  assay: 'PRRSV' | 'IAV';
  ct: number | null;
  collectedOn: string;
}

const CODES = {
  IAV: { ct: 'BR-IAV-CT', result: 'BR-IAV-RES', name: 'Influenza A virus M gene RNA' },
  PRRSV: { ct: 'BR-PRRS-CT', result: 'BR-PRRS-RES', name: 'PRRS virus ORF7 RNA' },
} as const;

/** SNOMED CT: 260373001 Detected, 260415000 Not detected (codes from memory). */
const DETECTED = '260373001^Detected^SCT';
const NOT_DETECTED = '260415000^Not detected^SCT';

const compact = (iso: string) => iso.replace(/-/g, '');

export function brackenridgeMessage(
  rows: readonly Hl7DemoRow[],
  options: { controlId: string; reportedOn: string; at: string; firstCase: number },
): Buffer {
  const text = (value: string) => escapeText(value, DEFAULT_ENCODING);
  const sentAt = options.at.replace(/[-:T]/g, '').slice(0, 14);
  const segments = [
    `MSH|^~\\&|BRAHL-LIMS|BRAHL|ROPEWATCH|CLINIC|${sentAt}||ORU^R01^ORU_R01|${text(options.controlId)}|P|2.5.1|||AL|NE||UNICODE UTF-8`,
  ];
  rows.forEach((row, index) => {
    const codes = CODES[row.assay];
    const accession = `BR-${options.reportedOn.slice(2, 4)}-${String(options.firstCase + index).padStart(4, '0')}`;
    segments.push(
      `OBR|${index + 1}||${text(accession)}|${codes.result}^${text(codes.name)}^L|||${compact(row.collectedOn)}|||||||||||||||${compact(options.reportedOn)}|||F`,
    );
    let obx = 1;
    if (row.ct !== null)
      segments.push(`OBX|${obx++}|NM|${codes.ct}^${text(`${codes.name} Ct`)}^L||${row.ct.toFixed(1)}|{cycles}||A|||F`);
    segments.push(
      `OBX|${obx}|CWE|${codes.result}^${text(codes.name)}^L||${row.ct === null ? NOT_DETECTED : DETECTED}||||||F`,
    );
    segments.push(`SPM|1|${text(row.sampleId)}||OF^Oral fluid^L|||||||||||||${compact(row.collectedOn)}`);
  });
  return Buffer.from(`${segments.join('\r')}\r`, 'utf8');
}
