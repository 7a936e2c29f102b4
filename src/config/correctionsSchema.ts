import { z } from 'zod';

/**
 * Sample IDs a person confirmed as mistyped (config/corrections.yaml, optional), each with the ID
 * it meant: ingest reads the row under the meant ID and records the ID as written.
 */
export const correctionsFileSchema = z
  .object({
    sampleIds: z
      .array(
        z
          .object({
            /** The sample ID as the file writes it (case and spaces ignored). */
            written: z.string().min(1),
            /** The ID it meant (a planned ID must carry its right check character). */
            meant: z.string().min(1),
            /** Only in files of this name (as received: the receipt's `file`). */
            file: z.string().min(1).optional(),
            /** Only on this line of that file (the receipt's line). */
            line: z.number().int().min(1).optional(),
            /** Who confirmed it and how: kept for the record. */
            note: z.string().optional(),
          })
          .strict(),
      )
      .default([]),
  })
  .strict();
