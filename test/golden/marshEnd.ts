/**
 * A small, hand-checkable workspace for the golden tests of the deliverables (summary.csv,
 * clusters.csv, next-round.csv). Everything is invented: the site Marsh End Grower, the lab
 * Pellham Veterinary Laboratory. The configuration and the dropped files are written here in
 * full (not copied from the demo), so the goldens move only when the program's behaviour does.
 *
 * Site marsh-end (code MEG), two barns, every pen in use, rows back to back (alley width 0: the
 * pen across the fence line is as near as the pen beside it):
 *
 *     G1 (2 x 5)   A1 A2 A3 A4 A5        G2 (2 x 4)   A1 A2 A3 A4
 *                  B1 B2 B3 B4 B5                     B1 B2 B3 B4
 *
 * Program: design prevalence 2 infected pens per barn, target 95 % per barn, rope sensitivity 1
 * for PRRSV (PCR) and 0.9 for PRRSV-AB (oral-fluid antibody ELISA), specificity 1, prior freedom
 * 0.5, introduction 0.02 per 14-day interval.
 *
 * Round 1 (ropes hung 2026-11-09, reported 2026-11-12): PRRSV only, every rope negative.
 *   G1: A1 A3 A5 B2 B4 (5 ropes)      G2: A1 A3 B2 B4 (4 ropes)
 * Round 2 (ropes hung 2026-11-23, reported 2026-11-26):
 *   G1: all 10 pens; PRRSV positive in A2 (Ct 28), A3 (Ct 30) and B3 (Ct 32), the rest negative.
 *   G2: A2 A4 B1 B3 hung; the rope of B3 (MEG-1123-14) never comes back. The other three are
 *       PRRSV negative and PRRSV-AB negative (S/P 0.12, 0.31, 0.05; the lab's cutoff is 0.4).
 */
export const SITE_ID = 'marsh-end';
export const ROUND_IDS = ['r01-2026-11-09', 'r02-2026-11-23'] as const;

const SITES_YAML = `organisation: Marsh End Pig Partnership (invented)
analysis:
  seed: 7
  sizingModel: hypergeometric
programDefaults:
  designPrevalence: { pens: 2 }
  targetConfidence: 0.95
  ropeSensitivity:
    default: 1
    PRRSV-AB: 0.9
  ropeSpecificity: 1
  roundWindowDays: 3
  intervalDays: 14
  priorFreedom: 0.5
  introductionPerInterval: 0.02
sites:
  - id: marsh-end
    name: Marsh End Grower
    code: MEG
    barns:
      - id: G1
        name: Grower 1
        layout: { rows: 2, pensPerRow: 5, numbering: per-row, rowLabels: [A, B], alleyWidth: 0 }
      - id: G2
        name: Grower 2
        layout: { rows: 2, pensPerRow: 4, numbering: per-row, rowLabels: [A, B], alleyWidth: 0 }
`;

const ASSAYS_YAML = `assays:
  - id: PRRSV
    name: PRRSV RT-PCR
    target: PRRSV RNA
    positiveBelow: 36
    suspectBelow: 40
    cycleLimit: 40
    loadBands:
      - { name: high, below: 25 }
      - { name: moderate, below: 30 }
    sequencingBelow: 32
    notifiable: false
    source: common practice, no single source
  - id: PRRSV-AB
    name: PRRSV oral-fluid antibody ELISA
    target: antibodies to PRRSV
    measure: sp-ratio
    positiveAtOrAbove: 0.4
    pairedWith: PRRSV
    notifiable: false
    source: Kittawornrat et al. 2012, J Vet Diagn Invest 24:262 (S/P >= 0.4)
`;

const LAB_YAML = `id: pellham
name: Pellham Veterinary Laboratory (invented)
fileNamePattern: '^pvl_'
format:
  delimiter: ','
  decimal: '.'
  encoding: utf-8
  dateFormat: yyyy-MM-dd
columns:
  sampleId: Specimen
  assay: Test
  result: Result
  call: Call
  accession: Accession
  collectedOn: Collected
  reportedOn: Reported
  internalControl: IC
notDetected:
  tokens: [Not Detected]
  blankIsNotDetected: true
  cycleLimitIsNotDetected: true
controlFailedTokens: [FAIL]
assays:
  PRRSV PCR: { assay: PRRSV, positiveBelow: 36, suspectBelow: 40, cycleLimit: 40 }
  PRRSV OF ELISA: { assay: PRRSV-AB, positiveAtOrAbove: 0.4 }
`;

/** The configuration folder's files, relative to it. */
export const CONFIG_FILES: Record<string, string> = {
  'sites.yaml': SITES_YAML,
  'assays.yaml': ASSAYS_YAML,
  'labs/pellham.yaml': LAB_YAML,
};

const ROPES_HEADER = 'sample_id,site,barn,pen,hung_on,notes';
const LAB_HEADER = 'Accession,Specimen,Test,Result,Call,IC,Collected,Reported';

/**
 * The files, in the order they arrive: the lab's two exports, then the producer's rope sheet of
 * both rounds. The results wait as unresolved until the sheet places them, so the outputs are
 * built once, from both rounds: no plan for round 2 is ever stored, and the plan for round 3 has
 * fresh sample IDs (an earlier plan's IDs would otherwise be kept for the pens it shared).
 */
export const DROPS: readonly { name: string; text: string }[] = [
  {
    name: 'pvl_results_2026-11-12.csv',
    text: [
      LAB_HEADER,
      ...[1, 2, 3, 4, 5, 6, 7, 8, 9].map(
        (i) => `PV-1${i},MEG-1109-0${i},PRRSV PCR,Not Detected,Negative,PASS,2026-11-09,2026-11-12`,
      ),
    ].join('\n'),
  },
  {
    name: 'pvl_results_2026-11-26.csv',
    text: [
      LAB_HEADER,
      'PV-201,MEG-1123-01,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-202,MEG-1123-02,PRRSV PCR,28.00,Positive,PASS,2026-11-23,2026-11-26',
      'PV-203,MEG-1123-03,PRRSV PCR,30.00,Positive,PASS,2026-11-23,2026-11-26',
      'PV-204,MEG-1123-04,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-205,MEG-1123-05,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-206,MEG-1123-06,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-207,MEG-1123-07,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-208,MEG-1123-08,PRRSV PCR,32.00,Positive,PASS,2026-11-23,2026-11-26',
      'PV-209,MEG-1123-09,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-210,MEG-1123-10,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-211,MEG-1123-11,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-212,MEG-1123-12,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-213,MEG-1123-13,PRRSV PCR,Not Detected,Negative,PASS,2026-11-23,2026-11-26',
      'PV-214,MEG-1123-11,PRRSV OF ELISA,0.12,Negative,,2026-11-23,2026-11-26',
      'PV-215,MEG-1123-12,PRRSV OF ELISA,0.31,Negative,,2026-11-23,2026-11-26',
      'PV-216,MEG-1123-13,PRRSV OF ELISA,0.05,Negative,,2026-11-23,2026-11-26',
    ].join('\n'),
  },
  {
    name: 'marsh-end_ropes_2026-11.csv',
    text: [
      ROPES_HEADER,
      'MEG-1109-01,marsh-end,G1,A1,2026-11-09,',
      'MEG-1109-02,marsh-end,G1,A3,2026-11-09,',
      'MEG-1109-03,marsh-end,G1,A5,2026-11-09,',
      'MEG-1109-04,marsh-end,G1,B2,2026-11-09,',
      'MEG-1109-05,marsh-end,G1,B4,2026-11-09,',
      'MEG-1109-06,marsh-end,G2,A1,2026-11-09,',
      'MEG-1109-07,marsh-end,G2,A3,2026-11-09,',
      'MEG-1109-08,marsh-end,G2,B2,2026-11-09,',
      'MEG-1109-09,marsh-end,G2,B4,2026-11-09,',
      'MEG-1123-01,marsh-end,G1,A1,2026-11-23,',
      'MEG-1123-02,marsh-end,G1,A2,2026-11-23,',
      'MEG-1123-03,marsh-end,G1,A3,2026-11-23,',
      'MEG-1123-04,marsh-end,G1,A4,2026-11-23,',
      'MEG-1123-05,marsh-end,G1,A5,2026-11-23,',
      'MEG-1123-06,marsh-end,G1,B1,2026-11-23,',
      'MEG-1123-07,marsh-end,G1,B2,2026-11-23,',
      'MEG-1123-08,marsh-end,G1,B3,2026-11-23,',
      'MEG-1123-09,marsh-end,G1,B4,2026-11-23,',
      'MEG-1123-10,marsh-end,G1,B5,2026-11-23,',
      'MEG-1123-11,marsh-end,G2,A2,2026-11-23,',
      'MEG-1123-12,marsh-end,G2,A4,2026-11-23,',
      'MEG-1123-13,marsh-end,G2,B1,2026-11-23,',
      'MEG-1123-14,marsh-end,G2,B3,2026-11-23,hung; tube lost in transit',
    ].join('\n'),
  },
].map((drop) => ({ ...drop, text: `${drop.text}\n` }));
