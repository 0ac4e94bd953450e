import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The evidence verdict a locked result carries, stored when it is locked: judged against both attrition boundaries,
 * with the one its plan registers. Later changes (a sheet accepted, a classroom's teacher changed, a roster import)
 * cannot move it; rows are never changed or deleted.
 */
export class RunVerdicts1796510000000 implements MigrationInterface {
  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE run_verdicts (
        run_id uuid PRIMARY KEY REFERENCES runs(id),
        plan_version int,
        boundary text NOT NULL CHECK (boundary IN ('cautious', 'optimistic')),
        boundary_reason text NOT NULL DEFAULT '',
        cautious jsonb NOT NULL,
        optimistic jsonb NOT NULL,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE TRIGGER run_verdicts_immutable BEFORE UPDATE OR DELETE ON run_verdicts FOR EACH ROW EXECUTE FUNCTION refuse_change()`);
    await q.query(`CREATE TRIGGER run_verdicts_no_truncate BEFORE TRUNCATE ON run_verdicts FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate()`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE run_verdicts`);
  }
}
