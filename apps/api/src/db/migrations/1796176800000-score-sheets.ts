import type { MigrationInterface, QueryRunner } from 'typeorm';

export class ScoreSheets1796176800000 implements MigrationInterface {
  name = 'ScoreSheets1796176800000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE classrooms ADD UNIQUE (study_id, id)`);
    await q.query(`
      CREATE TABLE score_sheets (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        classroom_id uuid NOT NULL REFERENCES classrooms(id),
        wave_id uuid NOT NULL REFERENCES waves(id),
        measure_id uuid NOT NULL REFERENCES measures(id),
        state varchar(20) NOT NULL DEFAULT 'open' CHECK (state IN ('open','submitted','accepted','returned')),
        mode varchar(20) NOT NULL DEFAULT 'rows' CHECK (mode IN ('rows','summary')),
        summary_n integer CHECK (summary_n >= 2),
        summary_mean numeric,
        summary_sd numeric CHECK (summary_sd >= 0),
        return_reasons text,
        locked boolean NOT NULL DEFAULT false,
        submitted_at timestamptz,
        submitted_by uuid REFERENCES users(id),
        reviewed_at timestamptz,
        reviewed_by uuid REFERENCES users(id),
        updated_at timestamptz NOT NULL DEFAULT now(),
        UNIQUE (classroom_id, wave_id, measure_id),
        UNIQUE (id, study_id, classroom_id, wave_id, measure_id),
        CHECK (mode = 'rows' OR (summary_n IS NOT NULL AND summary_mean IS NOT NULL AND summary_sd IS NOT NULL))
      )`);
    await q.query(`CREATE INDEX score_sheets_study ON score_sheets (study_id, wave_id, measure_id)`);
    // A student code belongs to one classroom of a study: attrition and crossover checks rely on it.
    await q.query(`
      CREATE TABLE students (
        study_id uuid NOT NULL REFERENCES studies(id),
        student_code varchar(40) NOT NULL,
        classroom_id uuid NOT NULL,
        PRIMARY KEY (study_id, student_code),
        UNIQUE (study_id, student_code, classroom_id),
        FOREIGN KEY (study_id, classroom_id) REFERENCES classrooms(study_id, id)
      )`);
    await q.query(`
      CREATE TABLE scores (
        sheet_id uuid NOT NULL,
        study_id uuid NOT NULL,
        classroom_id uuid NOT NULL,
        wave_id uuid NOT NULL,
        measure_id uuid NOT NULL,
        student_code varchar(40) NOT NULL,
        score numeric,
        left_study boolean NOT NULL DEFAULT false,
        note varchar(500) NOT NULL DEFAULT '',
        PRIMARY KEY (sheet_id, student_code),
        UNIQUE (study_id, wave_id, measure_id, classroom_id, student_code),
        FOREIGN KEY (sheet_id, study_id, classroom_id, wave_id, measure_id)
          REFERENCES score_sheets(id, study_id, classroom_id, wave_id, measure_id),
        FOREIGN KEY (study_id, student_code, classroom_id) REFERENCES students(study_id, student_code, classroom_id),
        CHECK (score IS NOT NULL OR left_study)
      )`);
    // The comparison queries read by study, wave and measure, then group by classroom (and its arm).
    await q.query(`CREATE INDEX scores_comparison ON scores (study_id, wave_id, measure_id, classroom_id) INCLUDE (score, left_study)`);
    // Once a locked run used a sheet, neither the sheet nor its scores can change.
    // Statement-level with transition tables: one check per bulk write, not one per row.
    await q.query(`
      CREATE FUNCTION refuse_locked_scores() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        hit uuid;
      BEGIN
        IF TG_OP IN ('INSERT', 'UPDATE') THEN
          SELECT s.id INTO hit FROM score_sheets s WHERE s.locked AND s.id IN (SELECT sheet_id FROM new_rows) LIMIT 1;
        END IF;
        IF hit IS NULL AND TG_OP IN ('UPDATE', 'DELETE') THEN
          SELECT s.id INTO hit FROM score_sheets s WHERE s.locked AND s.id IN (SELECT sheet_id FROM old_rows) LIMIT 1;
        END IF;
        IF hit IS NOT NULL THEN
          RAISE EXCEPTION 'score sheet % is locked by a confirmatory run', hit USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER scores_locked_insert AFTER INSERT ON scores REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION refuse_locked_scores()`);
    await q.query(`CREATE TRIGGER scores_locked_update AFTER UPDATE ON scores REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION refuse_locked_scores()`);
    await q.query(`CREATE TRIGGER scores_locked_delete AFTER DELETE ON scores REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION refuse_locked_scores()`);
    await q.query(`
      CREATE FUNCTION refuse_locked_sheet_edit() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF OLD.locked THEN
          RAISE EXCEPTION 'score sheet % is locked by a confirmatory run', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN COALESCE(NEW, OLD);
      END $$`);
    await q.query(`CREATE TRIGGER score_sheets_locked BEFORE UPDATE OR DELETE ON score_sheets FOR EACH ROW EXECUTE FUNCTION refuse_locked_sheet_edit()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: drops every score sheet, score and the students registry.
    await q.query('DROP TABLE scores');
    await q.query('DROP FUNCTION refuse_locked_scores()');
    await q.query('DROP TABLE students');
    await q.query('DROP TABLE score_sheets');
    await q.query('DROP FUNCTION refuse_locked_sheet_edit()');
    await q.query('ALTER TABLE classrooms DROP CONSTRAINT classrooms_study_id_id_key');
  }
}
