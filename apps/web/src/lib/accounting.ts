import { lossReasonWords, type Accounting, type Arm, type UnitAccount } from '@evenhand/entities';
import { formatCount } from '@/lib/format';

/** One arm's account of a unit (classrooms or students). */
export function armAccount(accounting: Accounting, arm: Arm, unit: 'classrooms' | 'students'): UnitAccount {
  return accounting.arms.find((a) => a.arm === arm)![unit];
}

/** Both arms together: randomised and analysed. */
export function totalAccount(accounting: Accounting, unit: 'classrooms' | 'students'): { randomised: number; analysed: number } {
  return accounting.arms.reduce((t, a) => ({ randomised: t.randomised + a[unit].randomised, analysed: t.analysed + a[unit].analysed }), { randomised: 0, analysed: 0 });
}

/** "3 students: outcome sheet returned to the teacher", one line per reason. */
export function lossLines(account: UnitAccount, unit: [string, string]): string[] {
  return account.lost.map((l) => `${formatCount(l.n)} ${l.n === 1 ? unit[0] : unit[1]}: ${lossReasonWords[l.reason]}`);
}

/** Classrooms the analysis left out because their outcome sheet was not read (not entered, not submitted, awaiting review or returned). */
export function classroomsWithoutReadSheet(accounting: Accounting): number {
  return accounting.lostClassrooms.filter((c) => c.reason === 'sheet-not-entered' || c.reason === 'sheet-not-submitted' || c.reason === 'awaiting-review' || c.reason === 'returned').length;
}
