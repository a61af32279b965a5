/** Query keys of this feature; mutations invalidate with these and with the permits' own prefix. */
export const gasKeys = {
  permit: (permitId: string) => ['gas-tests', permitId] as const,
  regime: (permitId: string) => ['gas-tests', permitId, 'regime'] as const,
  tests: (permitId: string, page: number) => ['gas-tests', permitId, 'list', page] as const,
  series: (permitId: string) => ['gas-tests', permitId, 'series'] as const,
  checks: (permitId: string) => ['gas-tests', permitId, 'checks'] as const,
  handovers: (permitId: string) => ['gas-tests', permitId, 'handovers'] as const,
  instruments: ['instruments'] as const,
};

/** The permit page and lists read under this prefix (permits feature); a gas test can change the permit's state. */
export const permitsPrefix = ['permits'] as const;
