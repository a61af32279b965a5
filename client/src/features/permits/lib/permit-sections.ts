/**
 * The permit's sections, each one tap from its summary at /permits/:id/<slug>. "crew" is its own
 * screen (signing on and off the lockbox is a task of its own); the rest share the section page.
 */
export const permitSections = [
  { slug: 'job', label: 'Job' },
  { slug: 'place', label: 'Place' },
  { slug: 'isolations', label: 'Isolation plan' },
  { slug: 'crew', label: 'Crew and lockbox' },
  { slug: 'checklist', label: 'Checklist' },
  { slug: 'gas-tests', label: 'Gas tests' },
  { slug: 'checks', label: 'Checks' },
  { slug: 'handovers', label: 'Handovers' },
  { slug: 'signatures', label: 'Signatures' },
  { slug: 'timeline', label: 'Timeline' },
  { slug: 'attachments', label: 'Attachments' },
] as const;

export type PermitSectionSlug = (typeof permitSections)[number]['slug'];

export const isPermitSection = (slug: string | undefined): slug is PermitSectionSlug => permitSections.some((s) => s.slug === slug);

/** What the caution says first on each section's screen (it appears once per screen, not in every part of it). */
export const sectionCautions: Partial<Record<PermitSectionSlug, string>> = {
  isolations: "Apply and verify each isolation in the plan's order and take them off in reverse. Each lock belongs to the person who put it on; check an isolation on site before relying on it. ",
  'gas-tests': 'Test the atmosphere inside the pipe and around the work before cleaning, before hot work starts and at every repeat interval. Stop the work at any failing reading. ',
  checks: 'Vents must carry vapour away from the work with no pressure building behind a plug; plugs crack and shrink as they dry. ',
  crew: 'Put your personal lock on the lockbox before you start and take it off only when you stop work. ',
};

/** The caution's first words on the summary: hazardous work asks for checks on site before every step. */
export const hazardCaution = (kinds: readonly string[]) =>
  kinds.includes('hot_work') || kinds.includes('confined_space') ? 'Hazardous work: check the gas tests and isolations on site before every step. ' : null;
