import type { MigrationInterface, QueryRunner } from 'typeorm';

export class StudyRegistry1796173200000 implements MigrationInterface {
  name = 'StudyRegistry1796173200000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE sites ADD COLUMN principal_id uuid REFERENCES users(id)`);
    await q.query(`
      CREATE TABLE studies (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        title varchar(160) NOT NULL,
        intervention text NOT NULL,
        comparison_condition text NOT NULL,
        unit_of_assignment varchar(20) NOT NULL CHECK (unit_of_assignment IN ('student','classroom','school')),
        status varchar(20) NOT NULL DEFAULT 'drafting'
          CHECK (status IN ('drafting','registered','enrolling','collecting','analysing','reported','archived')),
        quasi_experimental boolean NOT NULL DEFAULT false,
        created_by uuid NOT NULL REFERENCES users(id),
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`
      CREATE TABLE measures (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        name varchar(120) NOT NULL,
        min_score numeric NOT NULL,
        max_score numeric NOT NULL CHECK (max_score > min_score),
        higher_is_better boolean NOT NULL,
        kind varchar(20) NOT NULL CHECK (kind IN ('achievement','behaviour')),
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE UNIQUE INDEX measures_study_name ON measures (study_id, lower(name))`);
    await q.query(`
      CREATE TABLE waves (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        kind varchar(20) NOT NULL CHECK (kind IN ('baseline','outcome','follow-up')),
        name varchar(120) NOT NULL,
        opens_on date NOT NULL,
        closes_on date NOT NULL CHECK (closes_on >= opens_on)
      )`);
    await q.query(`CREATE UNIQUE INDEX waves_study_name ON waves (study_id, lower(name))`);
    await q.query(`
      CREATE TABLE plan_drafts (
        study_id uuid PRIMARY KEY REFERENCES studies(id),
        content jsonb NOT NULL,
        updated_by uuid NOT NULL REFERENCES users(id),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`
      CREATE TABLE plan_versions (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        version integer NOT NULL CHECK (version >= 1),
        content jsonb NOT NULL,
        sha256 char(64) NOT NULL,
        reason text CHECK ((version = 1) = (reason IS NULL)),
        changes jsonb NOT NULL DEFAULT '[]',
        created_by uuid NOT NULL REFERENCES users(id),
        created_at timestamptz NOT NULL DEFAULT now(),
        UNIQUE (study_id, version)
      )`);
    await q.query(`CREATE TRIGGER plan_versions_immutable BEFORE UPDATE OR DELETE ON plan_versions FOR EACH ROW EXECUTE FUNCTION refuse_change()`);
    await q.query(`
      CREATE TABLE study_sites (
        study_id uuid NOT NULL REFERENCES studies(id),
        site_id uuid NOT NULL REFERENCES sites(id),
        enrolled_at timestamptz NOT NULL DEFAULT now(),
        PRIMARY KEY (study_id, site_id)
      )`);
    await q.query(`
      CREATE TABLE cohorts (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        name varchar(120) NOT NULL,
        UNIQUE (study_id, id)
      )`);
    await q.query(`CREATE UNIQUE INDEX cohorts_study_name ON cohorts (study_id, lower(name))`);
    await q.query(`
      CREATE TABLE classrooms (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL,
        site_id uuid NOT NULL,
        cohort_id uuid NOT NULL,
        teacher_id uuid NOT NULL REFERENCES users(id),
        name varchar(120) NOT NULL,
        grade varchar(20) NOT NULL,
        expected_size integer NOT NULL CHECK (expected_size BETWEEN 1 AND 200),
        arm varchar(20) CHECK (arm IN ('intervention','comparison')),
        created_at timestamptz NOT NULL DEFAULT now(),
        FOREIGN KEY (study_id, site_id) REFERENCES study_sites(study_id, site_id),
        FOREIGN KEY (study_id, cohort_id) REFERENCES cohorts(study_id, id)
      )`);
    await q.query(`CREATE UNIQUE INDEX classrooms_site_name ON classrooms (study_id, site_id, lower(name))`);
    await q.query(`CREATE INDEX classrooms_teacher ON classrooms (teacher_id)`);
    await q.query(`
      CREATE TABLE draws (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL UNIQUE REFERENCES studies(id),
        seed varchar(200) NOT NULL,
        algorithm varchar(60) NOT NULL,
        algorithm_version varchar(20) NOT NULL,
        unit varchar(20) NOT NULL CHECK (unit IN ('classroom','school')),
        blocks jsonb NOT NULL,
        assignments jsonb NOT NULL,
        committed_by uuid NOT NULL REFERENCES users(id),
        committed_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE TRIGGER draws_immutable BEFORE UPDATE OR DELETE ON draws FOR EACH ROW EXECUTE FUNCTION refuse_change()`);
    await q.query(`
      CREATE TABLE draw_reassignments (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        draw_id uuid NOT NULL REFERENCES draws(id),
        classroom_id uuid NOT NULL REFERENCES classrooms(id),
        from_arm varchar(20) NOT NULL CHECK (from_arm IN ('intervention','comparison')),
        to_arm varchar(20) NOT NULL CHECK (to_arm IN ('intervention','comparison') AND to_arm <> from_arm),
        reason text NOT NULL CHECK (length(reason) >= 10),
        by_user uuid NOT NULL REFERENCES users(id),
        at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE TRIGGER draw_reassignments_append_only BEFORE UPDATE OR DELETE ON draw_reassignments FOR EACH ROW EXECUTE FUNCTION refuse_change()`);
    // A classroom's arm only ever comes from its study's committed draw or a recorded reassignment.
    await q.query(`
      CREATE FUNCTION classroom_arm_guard() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        drawn text;
      BEGIN
        IF NEW.arm IS NOT DISTINCT FROM OLD.arm THEN RETURN NEW; END IF;
        SELECT a->>'arm' INTO drawn FROM draws d, jsonb_array_elements(d.assignments) a
          WHERE d.study_id = NEW.study_id AND (a->>'unitId' = NEW.id::text OR a->>'unitId' = NEW.site_id::text) LIMIT 1;
        IF drawn IS NULL THEN
          RAISE EXCEPTION 'classroom % has no committed draw', NEW.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        IF OLD.arm IS NULL AND NEW.arm = drawn THEN RETURN NEW; END IF;
        IF EXISTS (SELECT 1 FROM draw_reassignments r WHERE r.classroom_id = NEW.id AND r.to_arm = NEW.arm
                   AND r.at = (SELECT max(at) FROM draw_reassignments WHERE classroom_id = NEW.id)) THEN
          RETURN NEW;
        END IF;
        RAISE EXCEPTION 'the arm of classroom % can change only through a recorded reassignment', NEW.id
          USING ERRCODE = 'integrity_constraint_violation';
      END $$`);
    await q.query(`CREATE TRIGGER classrooms_arm_guard BEFORE UPDATE OF arm ON classrooms FOR EACH ROW EXECUTE FUNCTION classroom_arm_guard()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: drops every study with its plans, waves, measures, sites' enrolments, classrooms and draws, and each site's principal.
    await q.query('DROP TABLE draw_reassignments');
    await q.query('DROP TABLE draws');
    await q.query('DROP TABLE classrooms');
    await q.query('DROP FUNCTION classroom_arm_guard()');
    await q.query('DROP TABLE cohorts');
    await q.query('DROP TABLE study_sites');
    await q.query('DROP TABLE plan_versions');
    await q.query('DROP TABLE plan_drafts');
    await q.query('DROP TABLE waves');
    await q.query('DROP TABLE measures');
    await q.query('DROP TABLE studies');
    await q.query('ALTER TABLE sites DROP COLUMN principal_id');
  }
}
