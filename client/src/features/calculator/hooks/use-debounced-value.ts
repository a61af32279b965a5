import { useEffect, useState } from 'react';

/** `value` once it has stopped changing for `delayMs`; pass primitives (or a JSON key) so renders alone do not restart the wait. */
export function useDebouncedValue<T>(value: T, delayMs = 300): T {
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setDebounced(value), delayMs);
    return () => clearTimeout(timer);
  }, [value, delayMs]);
  return debounced;
}
