/**
 * Steel pipe outside diameters and wall thicknesses, inches.
 *
 * Source: ASME B36.10M-2004, "Welded and Seamless Wrought Steel Pipe", Table 1 (inch columns),
 * as commonly tabulated: NPS 1/8 to 48 in every schedule the table lists (10, 20, 30, STD, 40, 60,
 * XS, 80, 100, 120, 140, 160, XXS). Values were entered by hand and are checked entry by entry in
 * tests/unit/calc/pipe-table.test.ts against an independent copy (Debian's python3-fluids, whose
 * tables cite the same edition and hold millimetres).
 *
 * A size with no wall in a column is left out of that column on purpose; B36.10M lists, for
 * example, no Sch 40 for NPS 22 or 26–30, no Sch 80 above NPS 24 and nothing but STD and XS above
 * NPS 36, and guessing one would put a wrong inside diameter on a plug or fill calculation.
 * Where fluids and B36.10M differ the table follows the standard's inch columns: fluids rounds
 * outside diameters to 0.1 mm or whole millimetres (NPS 10: 273 mm for 10.750 in = 273.05 mm) and
 * gives the NPS 1 1/2 XXS wall as 10.15 mm for 0.400 in (10.16 mm). Pipe is ordered, marked and
 * measured here in inches, and the calculations work in inches.
 */

/** Every wall designation B36.10M lists, thinnest first as the trade reads the table. */
export const B36_SCHEDULES = ['10', '20', '30', 'STD', '40', '60', 'XS', '80', '100', '120', '140', '160', 'XXS'] as const;
export type B36Schedule = (typeof B36_SCHEDULES)[number];

/**
 * The four designations a pipeline record in the register can carry (the database allows only
 * these); the calculator offers every one of B36_SCHEDULES.
 */
export const PIPE_SCHEDULES = ['STD', '40', 'XS', '80'] as const satisfies readonly B36Schedule[];
export type PipeSchedule = (typeof PIPE_SCHEDULES)[number];

export interface PipeTableRow {
  /** Nominal pipe size as a number (1 1/4 → 1.25). */
  nps: number;
  /** Nominal pipe size as the trade writes it ("1 1/4"). */
  label: string;
  odIn: number;
  wallIn: Readonly<Partial<Record<B36Schedule, number>>>;
}

export const PIPE_TABLE: readonly PipeTableRow[] = [
  { nps: 0.125, label: '1/8', odIn: 0.405, wallIn: { '10': 0.049, '30': 0.057, STD: 0.068, '40': 0.068, XS: 0.095, '80': 0.095 } },
  { nps: 0.25, label: '1/4', odIn: 0.54, wallIn: { '10': 0.065, '30': 0.073, STD: 0.088, '40': 0.088, XS: 0.119, '80': 0.119 } },
  { nps: 0.375, label: '3/8', odIn: 0.675, wallIn: { '10': 0.065, '30': 0.073, STD: 0.091, '40': 0.091, XS: 0.126, '80': 0.126 } },
  { nps: 0.5, label: '1/2', odIn: 0.84, wallIn: { '10': 0.083, '30': 0.095, STD: 0.109, '40': 0.109, XS: 0.147, '80': 0.147, '160': 0.188, XXS: 0.294 } },
  { nps: 0.75, label: '3/4', odIn: 1.05, wallIn: { '10': 0.083, '30': 0.095, STD: 0.113, '40': 0.113, XS: 0.154, '80': 0.154, '160': 0.219, XXS: 0.308 } },
  { nps: 1, label: '1', odIn: 1.315, wallIn: { '10': 0.109, '30': 0.114, STD: 0.133, '40': 0.133, XS: 0.179, '80': 0.179, '160': 0.25, XXS: 0.358 } },
  { nps: 1.25, label: '1 1/4', odIn: 1.66, wallIn: { '10': 0.109, '30': 0.117, STD: 0.14, '40': 0.14, XS: 0.191, '80': 0.191, '160': 0.25, XXS: 0.382 } },
  { nps: 1.5, label: '1 1/2', odIn: 1.9, wallIn: { '10': 0.109, '30': 0.125, STD: 0.145, '40': 0.145, XS: 0.2, '80': 0.2, '160': 0.281, XXS: 0.4 } },
  { nps: 2, label: '2', odIn: 2.375, wallIn: { '10': 0.109, '30': 0.125, STD: 0.154, '40': 0.154, XS: 0.218, '80': 0.218, '160': 0.344, XXS: 0.436 } },
  { nps: 2.5, label: '2 1/2', odIn: 2.875, wallIn: { '10': 0.12, '30': 0.188, STD: 0.203, '40': 0.203, XS: 0.276, '80': 0.276, '160': 0.375, XXS: 0.552 } },
  { nps: 3, label: '3', odIn: 3.5, wallIn: { '10': 0.12, '30': 0.188, STD: 0.216, '40': 0.216, XS: 0.3, '80': 0.3, '160': 0.438, XXS: 0.6 } },
  { nps: 3.5, label: '3 1/2', odIn: 4, wallIn: { '10': 0.12, '30': 0.188, STD: 0.226, '40': 0.226, XS: 0.318, '80': 0.318 } },
  { nps: 4, label: '4', odIn: 4.5, wallIn: { '10': 0.12, '30': 0.188, STD: 0.237, '40': 0.237, XS: 0.337, '80': 0.337, '120': 0.438, '160': 0.531, XXS: 0.674 } },
  { nps: 5, label: '5', odIn: 5.563, wallIn: { '10': 0.134, STD: 0.258, '40': 0.258, XS: 0.375, '80': 0.375, '120': 0.5, '160': 0.625, XXS: 0.75 } },
  { nps: 6, label: '6', odIn: 6.625, wallIn: { '10': 0.134, STD: 0.28, '40': 0.28, XS: 0.432, '80': 0.432, '120': 0.562, '160': 0.719, XXS: 0.864 } },
  { nps: 8, label: '8', odIn: 8.625, wallIn: { '10': 0.148, '20': 0.25, '30': 0.277, STD: 0.322, '40': 0.322, '60': 0.406, XS: 0.5, '80': 0.5, '100': 0.594, '120': 0.719, '140': 0.812, '160': 0.906, XXS: 0.875 } },
  { nps: 10, label: '10', odIn: 10.75, wallIn: { '10': 0.165, '20': 0.25, '30': 0.307, STD: 0.365, '40': 0.365, '60': 0.5, XS: 0.5, '80': 0.594, '100': 0.719, '120': 0.844, '140': 1, '160': 1.125, XXS: 1 } },
  { nps: 12, label: '12', odIn: 12.75, wallIn: { '10': 0.18, '20': 0.25, '30': 0.33, STD: 0.375, '40': 0.406, '60': 0.562, XS: 0.5, '80': 0.688, '100': 0.844, '120': 1, '140': 1.125, '160': 1.312, XXS: 1 } },
  { nps: 14, label: '14', odIn: 14, wallIn: { '10': 0.25, '20': 0.312, '30': 0.375, STD: 0.375, '40': 0.438, '60': 0.594, XS: 0.5, '80': 0.75, '100': 0.938, '120': 1.094, '140': 1.25, '160': 1.406 } },
  { nps: 16, label: '16', odIn: 16, wallIn: { '10': 0.25, '20': 0.312, '30': 0.375, STD: 0.375, '40': 0.5, '60': 0.656, XS: 0.5, '80': 0.844, '100': 1.031, '120': 1.219, '140': 1.438, '160': 1.594 } },
  { nps: 18, label: '18', odIn: 18, wallIn: { '10': 0.25, '20': 0.312, '30': 0.438, STD: 0.375, '40': 0.562, '60': 0.75, XS: 0.5, '80': 0.938, '100': 1.156, '120': 1.375, '140': 1.562, '160': 1.781 } },
  { nps: 20, label: '20', odIn: 20, wallIn: { '10': 0.25, '20': 0.375, '30': 0.5, STD: 0.375, '40': 0.594, '60': 0.812, XS: 0.5, '80': 1.031, '100': 1.281, '120': 1.5, '140': 1.75, '160': 1.969 } },
  { nps: 22, label: '22', odIn: 22, wallIn: { '10': 0.25, '20': 0.375, '30': 0.5, STD: 0.375, '60': 0.875, XS: 0.5, '80': 1.125, '100': 1.375, '120': 1.625, '140': 1.875, '160': 2.125 } },
  { nps: 24, label: '24', odIn: 24, wallIn: { '10': 0.25, '20': 0.375, '30': 0.562, STD: 0.375, '40': 0.688, '60': 0.969, XS: 0.5, '80': 1.219, '100': 1.531, '120': 1.812, '140': 2.062, '160': 2.344 } },
  { nps: 26, label: '26', odIn: 26, wallIn: { '10': 0.312, '20': 0.5, STD: 0.375, XS: 0.5 } },
  { nps: 28, label: '28', odIn: 28, wallIn: { '10': 0.312, '20': 0.5, '30': 0.625, STD: 0.375, XS: 0.5 } },
  { nps: 30, label: '30', odIn: 30, wallIn: { '10': 0.312, '20': 0.5, '30': 0.625, STD: 0.375, XS: 0.5 } },
  { nps: 32, label: '32', odIn: 32, wallIn: { '10': 0.312, '20': 0.5, '30': 0.625, STD: 0.375, '40': 0.688, XS: 0.5 } },
  { nps: 34, label: '34', odIn: 34, wallIn: { '10': 0.312, '20': 0.5, '30': 0.625, STD: 0.375, '40': 0.688, XS: 0.5 } },
  { nps: 36, label: '36', odIn: 36, wallIn: { '10': 0.312, '20': 0.5, '30': 0.625, STD: 0.375, '40': 0.75, XS: 0.5 } },
  { nps: 38, label: '38', odIn: 38, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 40, label: '40', odIn: 40, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 42, label: '42', odIn: 42, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 44, label: '44', odIn: 44, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 46, label: '46', odIn: 46, wallIn: { STD: 0.375, XS: 0.5 } },
  { nps: 48, label: '48', odIn: 48, wallIn: { STD: 0.375, XS: 0.5 } },
];
