import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Change notices for the API's memory caches (src/db/change-feed.ts): at commit, a change to what the session
 * check reads (an account, its grants, a school's name) or to what a locked run's answer depends on (the study's
 * finished and locked confirmatory runs) notifies its tag on `evenhand_changes`, whichever process or tool wrote it.
 */
export class ChangeFeed1796400000000 implements MigrationInterface {
  name = 'ChangeFeed1796400000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE FUNCTION notify_change() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_TABLE_NAME = 'users' THEN
          PERFORM pg_notify('evenhand_changes', 'user:' || OLD.id);
        ELSIF TG_TABLE_NAME = 'sites' THEN
          PERFORM pg_notify('evenhand_changes', 'site:' || OLD.id);
        ELSIF TG_TABLE_NAME = 'role_grants' THEN
          IF TG_OP <> 'INSERT' THEN PERFORM pg_notify('evenhand_changes', 'user:' || OLD.user_id); END IF;
          IF TG_OP <> 'DELETE' THEN PERFORM pg_notify('evenhand_changes', 'user:' || NEW.user_id); END IF;
        ELSE -- runs, comparisons
          IF TG_OP <> 'INSERT' THEN PERFORM pg_notify('evenhand_changes', 'runs:' || OLD.study_id); END IF;
          IF TG_OP <> 'DELETE' THEN PERFORM pg_notify('evenhand_changes', 'runs:' || NEW.study_id); END IF;
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`
      CREATE TRIGGER users_changed AFTER UPDATE ON users FOR EACH ROW
        WHEN ((OLD.email, OLD.name, OLD.active, OLD.session_version) IS DISTINCT FROM (NEW.email, NEW.name, NEW.active, NEW.session_version))
        EXECUTE FUNCTION notify_change()`);
    await q.query(`CREATE TRIGGER users_deleted AFTER DELETE ON users FOR EACH ROW EXECUTE FUNCTION notify_change()`);
    await q.query(`CREATE TRIGGER role_grants_changed AFTER INSERT OR UPDATE OR DELETE ON role_grants FOR EACH ROW EXECUTE FUNCTION notify_change()`);
    await q.query(`CREATE TRIGGER sites_renamed AFTER UPDATE ON sites FOR EACH ROW WHEN (OLD.name IS DISTINCT FROM NEW.name) EXECUTE FUNCTION notify_change()`);
    await q.query(`CREATE TRIGGER runs_changed AFTER INSERT OR DELETE ON runs FOR EACH ROW EXECUTE FUNCTION notify_change()`);
    await q.query(`
      CREATE TRIGGER runs_state_changed AFTER UPDATE ON runs FOR EACH ROW
        WHEN ((OLD.study_id, OLD.comparison_id, OLD.kind, OLD.state, OLD.finished_at, OLD.locked_at) IS DISTINCT FROM (NEW.study_id, NEW.comparison_id, NEW.kind, NEW.state, NEW.finished_at, NEW.locked_at))
        EXECUTE FUNCTION notify_change()`);
    await q.query(`
      CREATE TRIGGER comparisons_changed AFTER UPDATE ON comparisons FOR EACH ROW
        WHEN ((OLD.study_id, OLD.prespecified) IS DISTINCT FROM (NEW.study_id, NEW.prespecified))
        EXECUTE FUNCTION notify_change()`);
  }

  async down(q: QueryRunner): Promise<void> {
    for (const [trigger, table] of [
      ['comparisons_changed', 'comparisons'],
      ['runs_state_changed', 'runs'],
      ['runs_changed', 'runs'],
      ['sites_renamed', 'sites'],
      ['role_grants_changed', 'role_grants'],
      ['users_deleted', 'users'],
      ['users_changed', 'users'],
    ]) {
      await q.query(`DROP TRIGGER ${trigger} ON ${table}`);
    }
    await q.query(`DROP FUNCTION notify_change()`);
  }
}
