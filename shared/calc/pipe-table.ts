/**
 * Steel pipe outside diameters and wall thicknesses, inches.
 *
 * Source: ASME B36.10M-2004, "Welded and Seamless Wrought Steel Pipe", Table 1 (inch columns),
 * as commonly tabulated. Values were entered by hand and are checked row by row in
 * tests/unit/calc/pipe-table.test.ts against an independent copy (Debian's python3-fluids,
 * whose tables cite the same edition).
 *
 * Only the four wall designations used on line-repair permits are kept: STD and XS (weight
 * classes) and Sch 40 and Sch 80. A size with no wall in a column is left out of that column on
 * purpose; B36.10M lists, for example, no Sch 40 for NPS 22, 26, 28 or 30 and no Sch 80 above
 * NPS 24, and guessing one would put a wrong inside diameter on a plug or fill calculation.
 */

export const PIPE_SCHEDULES = ['STD', '40', 'XS', '80'] as const;
export type PipeSchedule = (typeof PIPE_SCHEDULES)[number];

export interface PipeTableRow {
  /** Nominal pipe size as a number (1 1/4 → 1.25). */
  nps: number;
  /** Nominal pipe size as the trade writes it ("1 1/4"). */
  label: string;
  odIn: number;
  wallIn: Readonly<Partial<Record<PipeSchedule, number>>>;
}

export const PIPE_TABLE: readonly PipeTableRow[] = [
  { nps: 0.5, label: '1/2', odIn: 0.84, wallIn: { STD: 0.109, '40': 0.109, XS: 0.147, '80': 0.147 } },
  { nps: 0.75, label: '3/4', odIn: 1.05, wallIn: { STD: 0.113, '40': 0.113, XS: 0.154, '80': 0.154 } },
  { nps: 1, label: '1', odIn: 1.315, wallIn: { STD: 0.133, '40': 0.133, XS: 0.179, '80': 0.179 } },
  { nps: 1.25, label: '1 1/4', odIn: 1.66, wallIn: { STD: 0.14, '40': 0.14, XS: 0.191, '80': 0.191 } },
  { nps: 1.5, label: '1 1/2', odIn: 1.9, wallIn: { STD: 0.145, '40': 0.145, XS: 0.2, '80': 0.2 } },
  { nps: 2, label: '2', odIn: 2.375, wallIn: { STD: 0.154, '40': 0.154, XS: 0.218, '80': 0.218 } },
  { nps: 2.5, label: '2 1/2', odIn: 2.875, wallIn: { STD: 0.203, '40': 0.203, XS: 0.276, '80': 0.276 } },
  { nps: 3, label: '3', odIn: 3.5, wallIn: { STD: 0.216, '40': 0.216, XS: 0.3, '80': 0.3 } },
  { nps: 3.5, label: '3 1/2', odIn: 4, wallIn: { STD: 0.226, '40': 0.226, XS: 0.318, '80': 0.318 } },
  { nps: 4, label: '4', odIn: 4.5, wallIn: { STD: 0.237, '40': 0.237, XS: 0.337, '80': 0.337 } },
  { nps: 5, label: '5', odIn: 5.563, wallIn: { STD: 0.258, '40': 0.258, XS: 0.375, '80': 0.375 } },
  { nps: 6, label: '6', odIn: 6.625, wallIn: { STD: 0.28, '40': 0.28, XS: 0.432, '80': 0.432 } },
  { nps: 8, label: '8', odIn: 8.625, wallIn: { STD: 0.322, '40': 0.322, XS: 0.5, '80': 0.5 } },
  { nps: 10, label: '10', odIn: 10.75, wallIn: { STD: 0.365, '40': 0.365, XS: 0.5, '80': 0.594 } },
  { nps: 12, label: '12', odIn: 12.75, wallIn: { STD: 0.375, '40': 0.406, XS: 0.5, '80': 0.688 } },
  { nps: 14, label: '14', odIn: 14, wallIn: { STD: 0.375, '40': 0.438, XS: 0.5, '80': 0.75 } },
  { nps: 16, label: '16', odIn: 16, wallIn: { STD: 0.375, '40': 0.5, XS: 0.5, '80': 0.844 } },
  { nps: 18, label: '18', odIn: 18, wallIn: { STD: 0.375, '40': 0.562, XS: 0.5, '80': 0.938 } },
  { nps: 20, label: '20', odIn: 20, wallIn: { STD: 0.375, '40': 0.594, XS: 0.5, '80': 1.031 } },
  { nps: 22, label: '22', odIn: 22, wallIn: { STD: 0.375, XS: 0.5, '80': 1.125 } },
  { nps: 24, label: '24', odIn: 24, wallIn: { STD: 0.375, '40': 0.688, XS: 0.5, '80': 1.219 } },
  { nps: 26, label: '26', odIn: 26, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 28, label: '28', odIn: 28, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 30, label: '30', odIn: 30, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 32, label: '32', odIn: 32, wallIn: { STD: 0.375, '40': 0.688, XS: 0.5 } },
  { nps: 34, label: '34', odIn: 34, wallIn: { STD: 0.375, '40': 0.688, XS: 0.5 } },
  { nps: 36, label: '36', odIn: 36, wallIn: { STD: 0.375, '40': 0.75, XS: 0.5 } },
];
