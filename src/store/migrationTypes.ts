/** One numbered schema migration (src/store/migrations.ts). */
export interface Migration {
  sql: string;
  /**
   * The migration rebuilds a table that others reference: foreign keys are switched off around
   * it and checked before it commits (the SQLite procedure for altering a table, "Making Other
   * Kinds Of Table Schema Changes", sqlite.org/lang_altertable.html).
   */
  rebuildsTables?: boolean;
}
