import type { Sequelize, Transaction } from 'sequelize';
import type { DemoSeeder } from './registry';

// The hazards-and-precautions checklist each demo tenant asks for. required_for lists the kinds of
// work that make an item required ('all' for every permit).
const items: { key: string; label: string; requiredFor: string[]; stage: 'before_work' | 'walkdown' }[] = [
  { key: 'crew_briefed', label: 'Crew briefed on the permit, its limits and the isolation plan', requiredFor: ['all'], stage: 'before_work' },
  { key: 'section_drained', label: 'Section drained and the pipe interior cleaned and dry', requiredFor: ['hot_work'], stage: 'before_work' },
  { key: 'ignition_removed', label: 'Ignition sources kept out of the vapour path; vents discharge away from the work', requiredFor: ['hot_work'], stage: 'before_work' },
  { key: 'extinguisher_ready', label: 'Fire extinguisher at the work site', requiredFor: ['hot_work'], stage: 'before_work' },
  { key: 'signs_posted', label: 'Warning signs posted around the work area', requiredFor: ['hot_work', 'excavation'], stage: 'before_work' },
  { key: 'excavation_inspected', label: 'Excavation inspected by a competent person; spoil set back', requiredFor: ['excavation'], stage: 'before_work' },
  { key: 'rescue_ready', label: 'Entry attendant and rescue plan in place', requiredFor: ['confined_space'], stage: 'before_work' },
  { key: 'crew_clear', label: 'Crew, tools and equipment clear of the line', requiredFor: ['all'], stage: 'walkdown' },
  { key: 'plugs_accounted', label: 'Every plug removed or recorded as left to be displaced by product', requiredFor: ['all'], stage: 'walkdown' },
  { key: 'vents_drains_closed', label: 'Vents and drains closed and capped', requiredFor: ['all'], stage: 'walkdown' },
  { key: 'valves_restored', label: 'Block valves back in their normal position', requiredFor: ['all'], stage: 'walkdown' },
  { key: 'site_tidy', label: 'Site tidied and waste removed', requiredFor: [], stage: 'walkdown' },
];

export async function seedChecklistFor(sequelize: Sequelize, tenantId: string, t?: Transaction) {
  for (const [i, item] of items.entries()) {
    await sequelize.query(
      `INSERT INTO checklist_templates (tenant_id, key, label, required_for, stage, sort) VALUES (:tenantId, :key, :label, CAST(:requiredFor AS text[]), :stage, :sort)
       ON CONFLICT (tenant_id, key) DO NOTHING`,
      { replacements: { tenantId, key: item.key, label: item.label, requiredFor: `{${item.requiredFor.join(',')}}`, stage: item.stage, sort: i }, transaction: t },
    );
  }
}

export const seedChecklists: DemoSeeder = async (sequelize, ids, t) => {
  for (const tenantId of Object.values(ids.tenants)) await seedChecklistFor(sequelize, tenantId, t);
};
