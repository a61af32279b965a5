/** Every permit id a list answer names (`{ permit: { id } }` at any depth): what a list screen follows. */
export function permitIdsIn(value: unknown, found = new Set<string>(), depth = 0): string[] {
  if (!value || typeof value !== 'object' || depth > 6) return [...found];
  if (Array.isArray(value)) for (const v of value) permitIdsIn(v, found, depth + 1);
  else {
    const permit = (value as { permit?: { id?: unknown } }).permit;
    if (permit && typeof permit.id === 'string') found.add(permit.id);
    for (const v of Object.values(value)) if (v && typeof v === 'object') permitIdsIn(v, found, depth + 1);
  }
  return [...found].sort();
}
