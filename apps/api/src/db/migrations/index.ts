// Migrations in the order they run; add each new one at the end.
import { Foundation1796169600000 } from './1796169600000-foundation.js';
import { StudyRegistry1796173200000 } from './1796173200000-study-registry.js';
import { ScoreSheets1796176800000 } from './1796176800000-score-sheets.js';

export const migrations = [Foundation1796169600000, StudyRegistry1796173200000, ScoreSheets1796176800000];
