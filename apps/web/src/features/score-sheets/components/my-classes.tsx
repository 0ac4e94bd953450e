import type { ScoreSheet, Study } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { SheetStateBadge } from '@/features/score-sheets/components/sheet-state-badge';
import { countsText, nextStep, type NextStep } from '@/features/score-sheets/sheet-state';
import { formatDay } from '@/lib/format';

export interface ClassroomSheets {
  classroomId: string;
  classroomName: string;
  siteName: string;
  sheets: ScoreSheet[];
}

/** The teacher's sheets of one study, by classroom, in wave order (the API sorts them so). */
export function byClassroom(sheets: readonly ScoreSheet[]): ClassroomSheets[] {
  const groups = new Map<string, ClassroomSheets>();
  for (const sheet of sheets) {
    const group = groups.get(sheet.classroomId) ?? { classroomId: sheet.classroomId, classroomName: sheet.classroomName, siteName: sheet.siteName, sheets: [] };
    group.sheets.push(sheet);
    groups.set(sheet.classroomId, group);
  }
  return [...groups.values()];
}

export function sheetPath(sheetId: string): string {
  return `/score-sheets/${sheetId}`;
}

function NextStepCell({ sheet, step }: { sheet: ScoreSheet; step: NextStep }) {
  switch (step.kind) {
    case 'fix':
      return (
        <div className="space-y-1">
          <Link to={sheetPath(sheet.id)} className="font-semibold">
            {step.label}
            <span className="sr-only">
              {' '}
              — {sheet.waveName}, {sheet.measureName}
            </span>
          </Link>
          <p className="rounded border-l-4 border-caution bg-caution-soft px-3 py-1.5 text-sm">
            <span className="font-semibold">Returned: </span>
            {step.reasons}
          </p>
        </div>
      );
    case 'enter':
      return (
        <Link to={sheetPath(sheet.id)} className="font-semibold">
          {step.label}
          <span className="sr-only">
            {' '}
            — {sheet.waveName}, {sheet.measureName}
          </span>
        </Link>
      );
    default:
      return (
        <span className="flex flex-wrap items-baseline gap-x-3">
          <span className={step.kind === 'accepted' ? 'text-accent-strong' : 'text-ink-muted'}>{step.label}</span>
          {(step.kind === 'waiting' || step.kind === 'accepted' || step.kind === 'closed') && (
            <Link to={sheetPath(sheet.id)} className="text-sm">
              View<span className="sr-only"> the {sheet.waveName} {sheet.measureName} sheet</span>
            </Link>
          )}
        </span>
      );
  }
}

export function ClassroomSheetsTable({ study, group }: { study: Study; group: ClassroomSheets }) {
  const headingId = `classroom-${group.classroomId}`;
  return (
    <section aria-labelledby={headingId} className="space-y-3">
      <h3 id={headingId} className="text-lg font-semibold">
        {group.classroomName} <span className="font-normal text-ink-muted">· {group.siteName}</span>
      </h3>
      <div className="relative overflow-x-auto rounded-lg border border-line bg-surface">
        <table className="w-full min-w-[48rem] table-fixed border-collapse text-left">
          <caption className="sr-only">
            Score sheets of {group.classroomName} in {study.title}
          </caption>
          <colgroup>
            <col className="w-[17%]" />
            <col className="w-[25%]" />
            <col className="w-[13%]" />
            <col className="w-[17%]" />
            <col className="w-[28%]" />
          </colgroup>
          <thead className="bg-sunken text-sm">
            <tr>
              <th scope="col" className="px-4 py-2.5 font-semibold">Wave</th>
              <th scope="col" className="px-4 py-2.5 font-semibold">Measure</th>
              <th scope="col" className="px-4 py-2.5 font-semibold">State</th>
              <th scope="col" className="px-4 py-2.5 font-semibold">Entered</th>
              <th scope="col" className="px-4 py-2.5 font-semibold">What to do next</th>
            </tr>
          </thead>
          <tbody>
            {group.sheets.map((sheet) => (
              <tr key={sheet.id} className="border-t border-line align-top">
                <th scope="row" className="px-4 py-3 font-normal">
                  <span className="font-semibold">{sheet.waveName}</span>
                  <span className="block text-sm text-ink-muted">
                    {formatDay(sheet.opensOn)} – {formatDay(sheet.closesOn)}
                  </span>
                </th>
                <td className="px-4 py-3">{sheet.measureName}</td>
                <td className="px-4 py-3">
                  <SheetStateBadge state={sheet.state} />
                </td>
                <td className="px-4 py-3 text-sm">{countsText(sheet.counts, sheet.mode)}</td>
                <td className="px-4 py-3">
                  <NextStepCell sheet={sheet} step={nextStep(sheet)} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}
