import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { defineRulesFor, type AppRule } from '@shared/abilities/define-ability';
import { roles, type Role } from '@shared/abilities/roles';

// docs/permissions.md is written by hand; this keeps each role's table listing exactly the
// (subject, action) pairs defineRulesFor gives that role.
const doc = readFileSync(fileURLToPath(new URL('../../docs/permissions.md', import.meta.url)), 'utf8');

/** The "| Subject | Actions | Scope |" rows under one `## …` heading, as "Subject: action" pairs. */
function tablePairs(heading: RegExp): string[] | null {
  const sections = doc.split(/^## /m);
  const section = sections.find((s) => heading.test(s.split('\n')[0]));
  if (!section) return null;
  const pairs: string[] = [];
  for (const line of section.split('\n')) {
    const cells = line.split('|').map((c) => c.trim());
    if (cells.length < 4 || cells[1] === 'Subject' || /^-+$/.test(cells[1])) continue;
    for (const action of cells[2].split(',').map((a) => a.trim()).filter(Boolean)) pairs.push(`${cells[1]}: ${action}`);
  }
  return pairs.sort();
}

function rulePairs(rules: AppRule[]): string[] {
  const pairs = new Set<string>();
  for (const r of rules) for (const s of [r.subject].flat()) for (const a of [r.action].flat()) pairs.add(`${String(s)}: ${a}`);
  return [...pairs].sort();
}

const rulesOf = (role: Role) =>
  defineRulesFor({ userId: 'u', tenantId: 't', memberships: [{ role, organisationId: 'o', organisationKind: ['contractor_lead', 'isolation_technician', 'gas_tester'].includes(role) ? 'contractor' : 'operator' }] });

describe('docs/permissions.md', () => {
  it('when the rules every member gets change, then the "Every member of a tenant" table must change with them', () => {
    // defineRulesFor adds the every-member reads first, before any role's own rules.
    const documented = tablePairs(/^Every member of a tenant/);
    expect(documented, 'an "## Every member of a tenant" section with a table').not.toBeNull();
    for (const role of roles) expect(documented, `the reads every ${role} gets`).toEqual(rulePairs(rulesOf(role).slice(0, 1)));
  });

  it.each([...roles])('when the rules of %s change, then its table in the doc must change with them', (role) => {
    const documented = tablePairs(new RegExp(`\\(\`${role}\`\\)\\s*$`));
    expect(documented, `a section headed "## … (\`${role}\`)" with a table`).not.toBeNull();
    expect(documented).toEqual(rulePairs(rulesOf(role).slice(1)));
  });
});
