import type { Migration } from '../migrator';

/**
 * The mail outbox and the one-time tokens carry links that sign someone in or change their password,
 * so request code must not read them across tenants.
 *
 * - Both tables get the tenant policy: inside withTenant() the server sees and writes only its
 *   tenant's invitations and mail. Rows without a tenant (password resets and their mail) are visible
 *   to nobody but the owner.
 * - What has to cross tenants goes through owner-run functions that each do one narrow thing: the
 *   outbox sender claims one due mail and marks it sent or failed; an invitation link names its
 *   tenant; a reset request and a reset link are handled whole inside the database.
 * - A delivered (or abandoned) mail keeps no usable link: the token in its body is blanked.
 * - Reset requests are counted per address (known or not, stored as a hash) so the limit answers the
 *   same for every address and every request writes the same rows.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
SELECT hp_enable_tenant_rls('mail_outbox');
SELECT hp_enable_tenant_rls('auth_tokens');

CREATE TABLE password_reset_requests (
  address_key text NOT NULL,
  requested_at timestamptz NOT NULL
);
CREATE INDEX password_reset_requests_key_idx ON password_reset_requests (address_key, requested_at);
CREATE INDEX password_reset_requests_at_idx ON password_reset_requests (requested_at);
-- Row security with no policy: only the owner-run function below reads or writes it.
ALTER TABLE password_reset_requests ENABLE ROW LEVEL SECURITY;

CREATE FUNCTION hp_redact_links(body text) RETURNS text LANGUAGE sql IMMUTABLE AS $$
  SELECT regexp_replace(body, '([?&]token=)[A-Za-z0-9_-]+', '\\1(removed once the mail was sent)', 'g')
$$;

-- The outbox sender: one due mail, locked for the caller's transaction (several senders skip each other's rows).
CREATE FUNCTION hp_outbox_claim()
RETURNS TABLE (id bigint, tenant_id uuid, to_address text, subject text, text_body text, attempts integer)
LANGUAGE sql VOLATILE SECURITY DEFINER SET search_path = public AS $$
  SELECT o.id, o.tenant_id, o.to_address, o.subject, o.text_body, o.attempts FROM mail_outbox o
  WHERE o.status = 'pending' AND o.next_attempt_at <= now()
  ORDER BY o.id LIMIT 1 FOR UPDATE SKIP LOCKED
$$;

CREATE FUNCTION hp_outbox_sent(p_id bigint) RETURNS void LANGUAGE sql VOLATILE SECURITY DEFINER SET search_path = public AS $$
  UPDATE mail_outbox SET status = 'sent', sent_at = now(), attempts = attempts + 1, text_body = hp_redact_links(text_body)
  WHERE id = p_id AND status = 'pending'
$$;

CREATE FUNCTION hp_outbox_failed(p_id bigint, p_attempts integer, p_error text, p_give_up boolean, p_backoff_seconds integer)
RETURNS void LANGUAGE sql VOLATILE SECURITY DEFINER SET search_path = public AS $$
  UPDATE mail_outbox SET attempts = p_attempts, last_error = left(p_error, 500),
    status = CASE WHEN p_give_up THEN 'failed' ELSE 'pending' END,
    next_attempt_at = now() + make_interval(secs => p_backoff_seconds),
    text_body = CASE WHEN p_give_up THEN hp_redact_links(text_body) ELSE text_body END
  WHERE id = p_id AND status = 'pending'
$$;

-- Accepting an invitation starts outside any tenant: the link itself says which tenant to work in.
CREATE FUNCTION hp_invitation_tenant(p_token_hash text) RETURNS uuid LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public AS $$
  SELECT tenant_id FROM auth_tokens WHERE token_hash = p_token_hash AND kind = 'invite'
$$;

-- Forgot-password, whole: the same statements run for a known and an unknown address, and the answer
-- says only how long to wait when the address has asked too often (0 = accepted).
CREATE FUNCTION hp_request_password_reset(
  p_email text, p_token_hash text, p_now timestamptz, p_expires timestamptz, p_subject text, p_body text, p_limit integer, p_window_seconds integer
) RETURNS integer LANGUAGE plpgsql VOLATILE SECURITY DEFINER SET search_path = public AS $$
DECLARE
  v_key text := encode(sha256(convert_to(lower(btrim(p_email)), 'UTF8')), 'hex');
  v_window interval := make_interval(secs => p_window_seconds);
  v_count integer;
  v_oldest timestamptz;
  v_user record;
BEGIN
  PERFORM pg_advisory_xact_lock(hashtext('hp_reset:' || v_key));
  DELETE FROM password_reset_requests WHERE requested_at <= p_now - v_window;
  SELECT count(*), min(requested_at) INTO v_count, v_oldest FROM password_reset_requests WHERE address_key = v_key AND requested_at > p_now - v_window;
  IF v_count >= p_limit THEN
    RETURN greatest(1, ceil(extract(epoch FROM (v_oldest + v_window - p_now))))::integer;
  END IF;
  INSERT INTO password_reset_requests (address_key, requested_at) VALUES (v_key, p_now);
  SELECT u.id, u.email INTO v_user FROM users u WHERE lower(u.email) = lower(btrim(p_email)) AND u.disabled_at IS NULL;
  IF FOUND THEN
    INSERT INTO auth_tokens (kind, token_hash, email, user_id, expires_at) VALUES ('reset', p_token_hash, v_user.email, v_user.id, p_expires);
    INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body) VALUES (NULL, v_user.email, p_subject, p_body);
  END IF;
  RETURN 0;
END $$;

-- A reset link, claimed: 'invalid' (unknown or used), 'expired', or 'ok' with the account. Using one
-- spends every outstanding reset link of that account, so an older mail cannot be used afterwards.
CREATE FUNCTION hp_claim_reset_token(p_token_hash text, p_now timestamptz)
RETURNS TABLE (outcome text, reset_user uuid) LANGUAGE plpgsql VOLATILE SECURITY DEFINER SET search_path = public AS $$
DECLARE r record;
BEGIN
  SELECT t.user_id, t.used_at, t.expires_at INTO r FROM auth_tokens t WHERE t.token_hash = p_token_hash AND t.kind = 'reset' FOR UPDATE;
  IF NOT FOUND OR r.used_at IS NOT NULL OR r.user_id IS NULL THEN
    RETURN QUERY SELECT 'invalid'::text, NULL::uuid;
    RETURN;
  END IF;
  IF r.expires_at < p_now THEN
    RETURN QUERY SELECT 'expired'::text, NULL::uuid;
    RETURN;
  END IF;
  UPDATE auth_tokens t SET used_at = p_now WHERE t.kind = 'reset' AND t.user_id = r.user_id AND t.used_at IS NULL;
  RETURN QUERY SELECT 'ok'::text, r.user_id;
END $$;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP FUNCTION IF EXISTS hp_claim_reset_token(text, timestamptz), hp_request_password_reset(text, text, timestamptz, timestamptz, text, text, integer, integer),
  hp_invitation_tenant(text), hp_outbox_failed(bigint, integer, text, boolean, integer), hp_outbox_sent(bigint), hp_outbox_claim(), hp_redact_links(text);
DROP TABLE IF EXISTS password_reset_requests;
DROP POLICY IF EXISTS tenant_isolation ON mail_outbox;
DROP POLICY IF EXISTS tenant_isolation ON auth_tokens;
ALTER TABLE mail_outbox DISABLE ROW LEVEL SECURITY;
ALTER TABLE auth_tokens DISABLE ROW LEVEL SECURITY;`);
};
