/** Classes that make a router Link look like the shared Button (a navigation stays a link). */
export const linkButtonClass = {
  primary: 'inline-flex min-h-11 items-center justify-center gap-2 rounded-md bg-brand px-4 font-semibold text-white no-underline hover:bg-brand-strong',
  secondary: 'inline-flex min-h-11 items-center justify-center gap-2 rounded-md border border-line bg-surface px-4 font-semibold text-ink no-underline hover:bg-brand-soft',
} as const;
