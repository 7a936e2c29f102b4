/**
 * Values derived from a frozen object, made once and kept while the object lives. A frozen
 * object cannot change, so what is derived from it stays true for every later call; a WeakMap
 * lets the value go with the object. An object that is not frozen may change between calls, so
 * its value is made afresh each time.
 */

/** The value `make` derives from `of`, kept in `kept` when `of` is frozen. */
export function keptOfFrozen<K extends object, V>(kept: WeakMap<K, V>, of: K, make: () => V): V {
  if (!Object.isFrozen(of)) return make();
  let value = kept.get(of);
  if (value === undefined) {
    value = make();
    kept.set(of, value);
  }
  return value;
}

/**
 * The value `make` derives from `of` and what `key` stands for (limits, strata ...), kept per
 * key in `kept` when `of` is frozen. A value may be null (kept as such).
 */
export function keptOfFrozenBy<K extends object, V>(
  kept: WeakMap<K, Map<string, V>>,
  of: K,
  key: string,
  make: () => V,
): V {
  if (!Object.isFrozen(of)) return make();
  let byKey = kept.get(of);
  if (byKey === undefined) {
    byKey = new Map();
    kept.set(of, byKey);
  }
  if (byKey.has(key)) return byKey.get(key) as V;
  const value = make();
  byKey.set(key, value);
  return value;
}
