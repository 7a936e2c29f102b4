/**
 * The cautions every human-facing output carries. One list, so that every page, summary and
 * rope sheet says the same thing.
 */
export const CAUTIONS: readonly string[] = Object.freeze([
  'Decision support only: ropewatch computes from the data it was given and does not diagnose.',
  "Interpretation belongs to the herd's veterinarian, who knows the herd, its history and the clinical picture.",
  "The lab's validated cutoffs govern: the Ct and S/P cutoffs in ropewatch's configuration must be the lab's own for that assay.",
  'Notifiable diseases are reported to the competent authorities under local rules, whatever ropewatch shows or does not show.',
]);

/** The notice printed wherever a notifiable assay appears. */
export function notifiableNotice(assayName: string): string {
  return `${assayName} is flagged notifiable: a suspect or positive result must be reported to the competent authority under local rules, and confirmatory testing follows the official procedure.`;
}
