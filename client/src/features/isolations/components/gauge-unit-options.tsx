import { gaugeUnitLabels, gaugeUnits } from '@shared/calc/pressure';

/** The pressure units a gauge may read in, as options of a select field. */
export function GaugeUnitOptions() {
  return gaugeUnits.map((u) => (
    <option key={u} value={u}>
      {gaugeUnitLabels[u]}
    </option>
  ));
}
