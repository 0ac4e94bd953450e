import type { MigrationInterface, QueryRunner } from 'typeorm';

export class ComparisonRuns1796180400000 implements MigrationInterface {
  name = 'ComparisonRuns1796180400000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE comparisons (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        measure_id uuid NOT NULL REFERENCES measures(id),
        wave_id uuid NOT NULL REFERENCES waves(id),
        label varchar(200) NOT NULL,
        unit_of_analysis varchar(20) NOT NULL CHECK (unit_of_analysis IN ('student','classroom','school')),
        primary_test varchar(20) NOT NULL CHECK (primary_test IN ('welch','student')),
        covariate varchar(20) NOT NULL CHECK (covariate IN ('baseline','none')),
        prespecified boolean NOT NULL,
        is_primary boolean NOT NULL DEFAULT false,
        schedule_cron varchar(100),
        created_by uuid NOT NULL REFERENCES users(id),
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE UNIQUE INDEX comparisons_prespecified ON comparisons (study_id, measure_id, wave_id) WHERE prespecified`);
    await q.query(`
      CREATE TABLE runs (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        comparison_id uuid NOT NULL REFERENCES comparisons(id),
        study_id uuid NOT NULL REFERENCES studies(id),
        kind varchar(20) NOT NULL CHECK (kind IN ('monitoring','confirmatory')),
        state varchar(20) NOT NULL DEFAULT 'queued' CHECK (state IN ('queued','running','finished','failed','locked')),
        reason text,
        plan_version integer,
        engine_version varchar(40),
        data_sha256 char(64),
        input_sheet_ids uuid[] NOT NULL DEFAULT '{}',
        results jsonb,
        error text,
        queued_by uuid REFERENCES users(id),
        queued_at timestamptz NOT NULL DEFAULT now(),
        started_at timestamptz,
        finished_at timestamptz,
        locked_by uuid REFERENCES users(id),
        locked_at timestamptz,
        CHECK (state <> 'locked' OR kind = 'confirmatory')
      )`);
    await q.query(`CREATE INDEX runs_comparison ON runs (comparison_id, queued_at DESC)`);
    // One locked result per comparison; a re-analysis is a new run that stays unlocked.
    await q.query(`CREATE UNIQUE INDEX runs_one_lock ON runs (comparison_id) WHERE state = 'locked'`);
    await q.query(`
      CREATE FUNCTION refuse_locked_run_change() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF OLD.state = 'locked' THEN
          RAISE EXCEPTION 'run % is locked and cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN COALESCE(NEW, OLD);
      END $$`);
    await q.query(`CREATE TRIGGER runs_locked BEFORE UPDATE OR DELETE ON runs FOR EACH ROW EXECUTE FUNCTION refuse_locked_run_change()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: drops every comparison and run, locked results included.
    await q.query('DROP TABLE runs');
    await q.query('DROP FUNCTION refuse_locked_run_change()');
    await q.query('DROP TABLE comparisons');
  }
}
