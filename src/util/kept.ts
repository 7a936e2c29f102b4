/**
 * Values derived from an object, made once and kept while the object lives (a WeakMap keyed on
 * it lets the value go with the object). `keptFor` trusts the caller that the object does not
 * change while its value is kept; `keptOfFrozen` keeps only for a frozen object, which cannot
 * change, and makes the value afresh for any other. `keptFor` also keeps in a Map, by a key of
 * any kind, for as long as the Map's owner holds it.
 */

/** Where keptFor keeps its values: a WeakMap, or a Map. */
interface Keeping<K, V> {
  get(key: K): V | undefined;
  set(key: K, value: V): unknown;
}

/** The value `make` derives from `of`, made on the first call and kept in `kept` (never undefined). */
export function keptFor<K, V>(kept: Keeping<K, V>, of: K, make: () => V): V {
  let value = kept.get(of);
  if (value === undefined) {
    value = make();
    kept.set(of, value);
  }
  return value;
}

/**
 * The value `make` derives from `of` and what `key` stands for (limits, strata, a rope count
 * ...), kept per key in `kept`. A value may be null (kept as such).
 */
export function keptForBy<K extends object, Key, V>(kept: WeakMap<K, Map<Key, V>>, of: K, key: Key, make: () => V): V {
  const byKey = keptFor(kept, of, () => new Map<Key, V>());
  if (byKey.has(key)) return byKey.get(key) as V;
  const value = make();
  byKey.set(key, value);
  return value;
}

/** As keptFor when `of` is frozen; otherwise the value is made afresh. */
export function keptOfFrozen<K extends object, V>(kept: WeakMap<K, V>, of: K, make: () => V): V {
  return Object.isFrozen(of) ? keptFor(kept, of, make) : make();
}

/** As keptForBy when `of` is frozen; otherwise the value is made afresh. */
export function keptOfFrozenBy<K extends object, Key, V>(
  kept: WeakMap<K, Map<Key, V>>,
  of: K,
  key: Key,
  make: () => V,
): V {
  return Object.isFrozen(of) ? keptForBy(kept, of, key, make) : make();
}
