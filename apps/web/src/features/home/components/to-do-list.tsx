import type { RoleGrant, ToDoItem, ToDoKind } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { areas, canOpen, hasRole, studyPath, studyTabs, type StudyTab } from '@/lib/navigation';

const plural = (n: number, one: string, many: string) => `${n.toLocaleString('en-US')} ${n === 1 ? one : many}`;

/** Each kind in the person's words: what waits, what to do about it, and where. */
const wording: Record<ToDoKind, { title: (n: number) => string; detail: string; tab?: StudyTab }> = {
  sheets_to_review: {
    title: (n) => `${plural(n, 'score sheet', 'score sheets')} to review`,
    detail: 'Accept each one, or return it to its teacher with the reasons.',
    tab: 'scoreSheets',
  },
  late_sheets: {
    title: (n) => `${plural(n, 'score sheet is', 'score sheets are')} late`,
    detail: 'Their wave has closed without them. Remind the teachers from the Score sheets tab.',
    tab: 'scoreSheets',
  },
  sites_to_enrol: {
    title: () => 'Enrol the schools',
    detail: 'No school takes part yet: enrol each one with its principal, then add its classrooms.',
    tab: 'sites',
  },
  draw_to_run: {
    title: () => 'Run the draw',
    detail: 'The plan is sealed and the classrooms are in: preview the random assignment, then commit it.',
    tab: 'draw',
  },
  plan_to_seal: {
    title: () => 'Seal the plan',
    detail: 'Add the measures and waves, write the pre-registration and seal it before any score comes in.',
    tab: 'plan',
  },
  runs_to_lock: {
    title: (n) => `${plural(n, 'confirmatory result', 'confirmatory results')} to lock`,
    detail: 'Read the finished run and lock it: its data, plan version and engine version are then frozen.',
    tab: 'comparisons',
  },
  undeliverable_digests: {
    title: (n) => `${plural(n, 'digest', 'digests')} could not be delivered`,
    detail: 'Check the principals’ e-mail addresses, then send the digests again.',
    tab: 'digests',
  },
  results_to_read: {
    title: (n) => `${plural(n, 'locked result', 'locked results')} to review`,
    detail: 'Each comes with its reproducibility bundle, so you can recompute its numbers.',
    tab: 'comparisons',
  },
  invitations_pending: {
    title: (n) => `${plural(n, 'invited person has', 'invited people have')} not chosen a password`,
    detail: 'They cannot sign in until they open the link in their invitation e-mail.',
  },
  accounts_without_role: {
    title: (n) => `${plural(n, 'account has', 'accounts have')} no role`,
    detail: 'They can sign in but open nothing: edit each one and give it the role its work needs.',
  },
};

/** What would appear here, so an empty list still says what this page will ask of the person. */
function whatAppearsHere(grants: readonly RoleGrant[]): string {
  const parts: string[] = [];
  if (hasRole(grants, 'coordinator')) parts.push('score sheets to review, late classrooms, schools to enrol and draws to run');
  if (hasRole(grants, 'research_lead')) parts.push('plans to seal and confirmatory results to lock');
  if (hasRole(grants, 'reviewer')) parts.push('locked results to review');
  if (hasRole(grants, 'admin')) parts.push('invitations nobody has accepted and accounts without a role');
  return parts.length ? `As the work goes on, ${parts.join('; ')} appear here.` : '';
}

function target(item: ToDoItem, grants: readonly RoleGrant[]): string | null {
  const tab = wording[item.kind].tab;
  if (item.study && tab) return canOpen(studyTabs[tab], grants) ? studyPath(item.study.id, tab) : null;
  return item.study ? null : areas.accounts.path;
}

export function ToDoList({ items, grants }: { items: ToDoItem[]; grants: readonly RoleGrant[] }) {
  if (items.length === 0) {
    return (
      <div>
        <p className="font-semibold">Nothing waits for you right now.</p>
        <p className="text-ink-muted">{whatAppearsHere(grants)}</p>
      </div>
    );
  }
  return (
    <ul className="space-y-3">
      {items.map((item) => {
        const words = wording[item.kind];
        const to = target(item, grants);
        const title = words.title(item.count);
        return (
          <li key={`${item.kind}|${item.study?.id ?? 'district'}`}>
            <p className="font-semibold">
              {to ? <Link to={to}>{title}</Link> : title}
              {item.study && <span className="font-normal text-ink-muted"> · {item.study.title}</span>}
            </p>
            <p className="text-ink-muted">{words.detail}</p>
          </li>
        );
      })}
    </ul>
  );
}
