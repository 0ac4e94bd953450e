import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A run reads every classroom's stored sums; turning them into moments (a numeric division each, then numeric text
 * for the driver to parse) cost a quarter of a second at 80 000 classrooms. The moments are now generated columns,
 * computed once when the sums are stored, with the same formulas as `sheetMomentsSql` (score-sheets/queries.ts).
 */
export class SheetSumMoments1796700000000 implements MigrationInterface {
  name = 'SheetSumMoments1796700000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      ALTER TABLE sheet_sums
        ADD COLUMN mean float8 GENERATED ALWAYS AS ((sy / nullif(n, 0))::float8) STORED,
        ADD COLUMN m2 float8 GENERATED ALWAYS AS (((n * syy - sy * sy) / nullif(n, 0))::float8) STORED,
        ADD COLUMN pair_mean_y float8 GENERATED ALWAYS AS ((py / nullif(np, 0))::float8) STORED,
        ADD COLUMN pair_mean_x float8 GENERATED ALWAYS AS ((px / nullif(np, 0))::float8) STORED,
        ADD COLUMN pair_syy float8 GENERATED ALWAYS AS (((np * pyy - py * py) / nullif(np, 0))::float8) STORED,
        ADD COLUMN pair_sxx float8 GENERATED ALWAYS AS (((np * pxx - px * px) / nullif(np, 0))::float8) STORED,
        ADD COLUMN pair_sxy float8 GENERATED ALWAYS AS (((np * pxy - px * py) / nullif(np, 0))::float8) STORED`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE sheet_sums DROP COLUMN mean, DROP COLUMN m2, DROP COLUMN pair_mean_y, DROP COLUMN pair_mean_x, DROP COLUMN pair_syy, DROP COLUMN pair_sxx, DROP COLUMN pair_sxy`);
  }
}
