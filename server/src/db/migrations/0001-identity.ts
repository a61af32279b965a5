import type { Migration } from '../migrator';

// Tenant-owned tables carry tenant_id and a UNIQUE (tenant_id, id) so child rows can use
// composite foreign keys: a row can never point at another tenant's record.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE tenants (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  name text NOT NULL,
  slug text NOT NULL UNIQUE,
  time_zone text NOT NULL DEFAULT 'UTC',
  location_unit text NOT NULL DEFAULT 'mi' CHECK (location_unit IN ('mi', 'km')),
  settings jsonb NOT NULL DEFAULT '{}'::jsonb,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE organisations (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  name text NOT NULL,
  kind text NOT NULL CHECK (kind IN ('operator', 'contractor')),
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, name)
);

CREATE TABLE users (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  email text NOT NULL,
  name text NOT NULL,
  password_hash text,
  disabled_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now()
);
CREATE UNIQUE INDEX users_email_key ON users (lower(email));

CREATE TABLE memberships (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  organisation_id uuid NOT NULL,
  user_id uuid NOT NULL REFERENCES users(id),
  role text NOT NULL CHECK (role IN ('tenant_admin', 'authoriser', 'contractor_lead', 'isolation_technician', 'gas_tester', 'control_room', 'auditor')),
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, user_id, organisation_id, role),
  FOREIGN KEY (tenant_id, organisation_id) REFERENCES organisations (tenant_id, id)
);
CREATE INDEX memberships_user_idx ON memberships (user_id);

CREATE TABLE qualifications (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  user_id uuid NOT NULL REFERENCES users(id),
  kind text NOT NULL,
  reference text,
  issued_on date NOT NULL,
  expires_on date NOT NULL,
  evidence_attachment_id uuid,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  CHECK (expires_on >= issued_on)
);
CREATE INDEX qualifications_user_idx ON qualifications (tenant_id, user_id);

CREATE TABLE auth_tokens (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  kind text NOT NULL CHECK (kind IN ('invite', 'reset')),
  token_hash text NOT NULL UNIQUE,
  email text NOT NULL,
  user_id uuid REFERENCES users(id),
  tenant_id uuid REFERENCES tenants(id),
  organisation_id uuid,
  role text,
  created_by uuid REFERENCES users(id),
  expires_at timestamptz NOT NULL,
  used_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE http_sessions (
  sid varchar NOT NULL PRIMARY KEY,
  sess json NOT NULL,
  expire timestamp(6) NOT NULL
);
CREATE INDEX http_sessions_expire_idx ON http_sessions (expire);

CREATE TABLE mail_outbox (
  id bigserial PRIMARY KEY,
  tenant_id uuid REFERENCES tenants(id),
  to_address text NOT NULL,
  subject text NOT NULL,
  text_body text NOT NULL,
  dedupe_key text UNIQUE,
  status text NOT NULL DEFAULT 'pending' CHECK (status IN ('pending', 'sent', 'failed')),
  attempts integer NOT NULL DEFAULT 0,
  next_attempt_at timestamptz NOT NULL DEFAULT now(),
  last_error text,
  created_at timestamptz NOT NULL DEFAULT now(),
  sent_at timestamptz
);
CREATE INDEX mail_outbox_due_idx ON mail_outbox (next_attempt_at) WHERE status = 'pending';
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS mail_outbox, http_sessions, auth_tokens, qualifications, memberships, users, organisations, tenants CASCADE`);
};
