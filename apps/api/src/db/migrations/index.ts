// Migrations in the order they run; add each new one at the end.
import { Foundation1796169600000 } from './1796169600000-foundation.js';
import { StudyRegistry1796173200000 } from './1796173200000-study-registry.js';
import { ScoreSheets1796176800000 } from './1796176800000-score-sheets.js';
import { ComparisonRuns1796180400000 } from './1796180400000-comparison-runs.js';
import { ScoreStudentIndex1796182200000 } from './1796182200000-score-student-index.js';
import { Digests1796184000000 } from './1796184000000-digests.js';
import { SetWiseScoreKeys1796187600000 } from './1796187600000-set-wise-score-keys.js';
import { DraftRowsWithoutScores1796188500000 } from './1796188500000-draft-rows-without-scores.js';
import { MonitoringSchedules1796191200000 } from './1796191200000-monitoring-schedules.js';
import { SheetDigests1796194800000 } from './1796194800000-sheet-digests.js';
import { RunArms1796198400000 } from './1796198400000-run-arms.js';
import { LockedResultGuards1796198500000 } from './1796198500000-locked-result-guards.js';
import { StudentCodeCase1796198600000 } from './1796198600000-student-code-case.js';
import { TwoLevelPrimaryTest1796208000000 } from './1796208000000-two-level-primary-test.js';
import { RosterImports1796204000000 } from './1796204000000-roster-imports.js';
import { SessionVersions1796200000000 } from './1796200000000-session-versions.js';
import { MailOutbox1796200400000 } from './1796200400000-mail-outbox.js';
import { RoleInvitations1796200800000 } from './1796200800000-role-invitations.js';
import { DistrictSignIn1796202000000 } from './1796202000000-district-sign-in.js';
import { YesNoMeasures1796210000000 } from './1796210000000-yes-no-measures.js';
import { GatheredLockDigests1796209000000 } from './1796209000000-gathered-lock-digests.js';
import { ChangeFeed1796400000000 } from './1796400000000-change-feed.js';
import { RunVerdicts1796510000000 } from './1796510000000-run-verdicts.js';
import { RosterStudentKeys1796500000000 } from './1796500000000-roster-student-keys.js';
import { SheetSums1796600000000 } from './1796600000000-sheet-sums.js';
import { RegisteredCounts1796600100000 } from './1796600100000-registered-counts.js';

export const migrations = [Foundation1796169600000, StudyRegistry1796173200000, ScoreSheets1796176800000, ComparisonRuns1796180400000, ScoreStudentIndex1796182200000, Digests1796184000000, SetWiseScoreKeys1796187600000, DraftRowsWithoutScores1796188500000, MonitoringSchedules1796191200000, SheetDigests1796194800000, RunArms1796198400000, LockedResultGuards1796198500000, StudentCodeCase1796198600000, TwoLevelPrimaryTest1796208000000, RosterImports1796204000000, SessionVersions1796200000000, MailOutbox1796200400000, RoleInvitations1796200800000, DistrictSignIn1796202000000, YesNoMeasures1796210000000, GatheredLockDigests1796209000000, ChangeFeed1796400000000, RunVerdicts1796510000000, RosterStudentKeys1796500000000, SheetSums1796600000000, RegisteredCounts1796600100000];
