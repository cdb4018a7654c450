import type { Knex } from 'knex'

// A stamp per team and per person that changes whenever data shown under it changes, so the app
// can keep a computed answer (a build's scoreboard, a rendered page) until the data behind it
// moves, and know so from one indexed look-up rather than by computing it again.
//
// The stamp is bumped by triggers, not by the code that writes, so no write path can forget it:
// a constraint trigger on every table that holds a team's or a person's data, deferred to the end
// of the transaction, so the stamp changes in the same commit as the data, and its row is locked
// only for the instant of the commit (a long import doesn't hold up other writers). Each scope is
// bumped once per transaction (a transaction-local setting remembers it). Values come from one
// sequence, so a stamp is never reused, even after rows are deleted and written again.
//
// Scopes: a team (its builds and everything in them, its members, invitations and audit log) and
// a person (their account, memberships, subscriptions, notices). A change to a person's name is
// shown in every team they are in, and a team's name to every member: both scopes are bumped.

const BUILD_TABLES = ['targets', 'revisions', 'findings', 'cell_stats', 'events', 'files', 'rig_tokens', 'subscriptions']
const FINDING_TABLES = ['finding_targets', 'fixes', 'finding_events', 'finding_comments']
const OTHER_TABLES = ['teams', 'users', 'memberships', 'invitations', 'audit_log', 'builds', 'readings', 'mention_notices']
const STAMPED_TABLES = [...BUILD_TABLES, ...FINDING_TABLES, ...OTHER_TABLES]
/**
 * Columns written as bookkeeping, which nobody is shown as a change: a rig token's last use (on every
 * request it makes), the e-mail worker's marks. An update of only these leaves the stamp. (The
 * worker's own table, deliveries, isn't stamped: no kept answer shows it.)
 */
const BOOKKEEPING: Record<string, string[]> = {
  rig_tokens: ['last_used_at', 'last_used_ip'],
  events: ['fanned_out_at'],
  mention_notices: ['sent_at'],
  subscriptions: ['digested_through', 'updated_at'],
}

/** 'a', 'b', … for the table names above (constants, not input) */
const sqlList = (names: string[]) => names.map(n => `'${n}'`).join(', ')

export async function up(knex: Knex): Promise<void> {
  await knex.raw('CREATE SEQUENCE data_stamps_seq')
  await knex.raw(`CREATE TABLE data_stamps (scope uuid PRIMARY KEY, n bigint NOT NULL)`)
  await knex.raw(`INSERT INTO data_stamps (scope, n) SELECT id, nextval('data_stamps_seq') FROM teams`)
  await knex.raw(`INSERT INTO data_stamps (scope, n) SELECT id, nextval('data_stamps_seq') FROM users`)

  // true the first time `kind`:`id` is seen in this transaction
  await knex.raw(`CREATE FUNCTION ratchet_first_touch(kind text, id uuid) RETURNS boolean LANGUAGE plpgsql AS $$
    DECLARE flag text := 'ratchet_stamp.' || kind || replace(id::text, '-', '');
    BEGIN
      IF id IS NULL OR current_setting(flag, true) = '1' THEN RETURN false; END IF;
      PERFORM set_config(flag, '1', true);
      RETURN true;
    END $$`)
  await knex.raw(`CREATE FUNCTION ratchet_touch(touched uuid) RETURNS void LANGUAGE plpgsql AS $$
    BEGIN
      IF ratchet_first_touch('s', touched) THEN
        INSERT INTO data_stamps (scope, n) VALUES (touched, nextval('data_stamps_seq'))
          ON CONFLICT (scope) DO UPDATE SET n = excluded.n;
      END IF;
    END $$`)
  await knex.raw(`CREATE FUNCTION ratchet_touch_build(touched uuid) RETURNS void LANGUAGE plpgsql AS $$
    BEGIN
      IF ratchet_first_touch('b', touched) THEN
        PERFORM ratchet_touch(team_id) FROM builds WHERE id = touched;
      END IF;
    END $$`)
  await knex.raw(`CREATE FUNCTION ratchet_stamp_row() RETURNS trigger LANGUAGE plpgsql AS $$
    DECLARE r record;
    BEGIN
      IF TG_OP = 'DELETE' THEN r := OLD; ELSE r := NEW; END IF;
      CASE
        WHEN TG_TABLE_NAME = ANY (ARRAY[${sqlList(BUILD_TABLES)}]) THEN
          PERFORM ratchet_touch_build(r.build_id);
          IF TG_TABLE_NAME = 'subscriptions' THEN PERFORM ratchet_touch(r.user_id); END IF;
        WHEN TG_TABLE_NAME = ANY (ARRAY[${sqlList(FINDING_TABLES)}]) THEN
          IF ratchet_first_touch('f', r.finding_id) THEN
            PERFORM ratchet_touch_build(build_id) FROM findings WHERE id = r.finding_id;
          END IF;
        WHEN TG_TABLE_NAME = 'readings' THEN
          IF ratchet_first_touch('r', r.revision_id) THEN
            PERFORM ratchet_touch_build(build_id) FROM revisions WHERE id = r.revision_id;
          END IF;
        WHEN TG_TABLE_NAME = 'builds' THEN
          PERFORM ratchet_touch(r.team_id);
        WHEN TG_TABLE_NAME = 'teams' THEN
          PERFORM ratchet_touch(r.id);
          PERFORM ratchet_touch(user_id) FROM memberships WHERE team_id = r.id;
        WHEN TG_TABLE_NAME = 'users' THEN
          PERFORM ratchet_touch(r.id);
          PERFORM ratchet_touch(team_id) FROM memberships WHERE user_id = r.id;
        WHEN TG_TABLE_NAME = 'memberships' THEN
          PERFORM ratchet_touch(r.team_id);
          PERFORM ratchet_touch(r.user_id);
        WHEN TG_TABLE_NAME IN ('invitations', 'audit_log') THEN
          PERFORM ratchet_touch(r.team_id);
        WHEN TG_TABLE_NAME = 'mention_notices' THEN
          PERFORM ratchet_touch(r.user_id);
      END CASE;
      RETURN NULL;
    END $$`)
  // TRUNCATE names no rows: every stamp moves
  await knex.raw(`CREATE FUNCTION ratchet_stamp_all() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      UPDATE data_stamps SET n = nextval('data_stamps_seq');
      RETURN NULL;
    END $$`)
  for (const table of STAMPED_TABLES) {
    await knex.raw(`CREATE CONSTRAINT TRIGGER ratchet_stamp AFTER INSERT OR DELETE ON ??
      DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION ratchet_stamp_row()`, [table])
    // an update that changes nothing (or only bookkeeping) leaves the stamp as it was
    const skip = BOOKKEEPING[table]
    const changed = skip
      ? `(to_jsonb(OLD) - '{${skip.join(',')}}'::text[]) IS DISTINCT FROM (to_jsonb(NEW) - '{${skip.join(',')}}'::text[])`
      : 'OLD.* IS DISTINCT FROM NEW.*'
    await knex.raw(`CREATE CONSTRAINT TRIGGER ratchet_stamp_update AFTER UPDATE ON ??
      DEFERRABLE INITIALLY DEFERRED FOR EACH ROW WHEN (${changed}) EXECUTE FUNCTION ratchet_stamp_row()`, [table])
    await knex.raw(`CREATE TRIGGER ratchet_stamp_truncate AFTER TRUNCATE ON ?? FOR EACH STATEMENT EXECUTE FUNCTION ratchet_stamp_all()`, [table])
  }
}

export async function down(knex: Knex): Promise<void> {
  for (const table of STAMPED_TABLES) {
    await knex.raw('DROP TRIGGER ratchet_stamp ON ??', [table])
    await knex.raw('DROP TRIGGER ratchet_stamp_update ON ??', [table])
    await knex.raw('DROP TRIGGER ratchet_stamp_truncate ON ??', [table])
  }
  await knex.raw('DROP FUNCTION ratchet_stamp_all(), ratchet_stamp_row(), ratchet_touch_build(uuid), ratchet_touch(uuid), ratchet_first_touch(text, uuid)')
  await knex.raw('DROP TABLE data_stamps')
  await knex.raw('DROP SEQUENCE data_stamps_seq')
}
