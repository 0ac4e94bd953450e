import mjml from 'mjml';
import type { DigestKind, SiteFacts } from '@evenhand/entities';
import { SUPPRESSED_WORDS, type ReportedCount } from '@evenhand/entities';
import { countWords, formatDay, formatNumber, formatPStatement, formatSigned } from './wording.js';

const PAPER = '#faf7f2';
const SURFACE = '#ffffff';
const INK = '#1f2328';
const MUTED = '#55595f';
const LINE = '#e2dacd';
const ACCENT = '#2f6f5e';
const FONT = "'Source Sans 3', 'Segoe UI', Arial, sans-serif";

export interface DigestLinks {
  mySchool: string;
  /** The preferences page, with the person's single-purpose token. */
  preferences: (frequency?: 'weekly' | 'locked' | 'none') => string;
}

export interface RenderedDigest {
  subject: string;
  html: string;
  text: string;
}

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

const kindTitle: Record<DigestKind, string> = { weekly: 'Weekly digest', lock: 'A result is locked', manual: 'Digest' };

export function digestSubject(kind: DigestKind, facts: SiteFacts, newlyLocked: string[] = []): string {
  const where = `${facts.study.title} (${facts.site.name})`;
  if (kind === 'lock') return newlyLocked.length > 1 ? `${newlyLocked.length} results are locked: ${where}` : `The result is locked: ${where}`;
  if (kind === 'weekly') return `This week in ${where}`;
  return `Update on ${where}`;
}

/** A table cell: the bare number, or the words that replace a hidden one. */
const countCell = (c: ReportedCount) => (c.suppressed || c.value === null ? SUPPRESSED_WORDS : c.value.toLocaleString('en-US'));

const armWords = (arm: 'intervention' | 'comparison' | null) =>
  arm === 'intervention' ? 'Intervention classrooms' : arm === 'comparison' ? 'Comparison classrooms' : 'Not assigned yet';

const waveStatus = { upcoming: 'Not open yet', open: 'Open now', closed: 'Closed' } as const;

interface Block {
  heading: string;
  paragraphs?: string[];
  table?: { head: string[]; rows: string[][]; numeric?: boolean[] };
  list?: string[];
  note?: string | null;
}

/** The content of a digest as plain blocks, so the HTML and the text alternative say exactly the same. */
/** A result's heading: in a lock digest, whether this event locked it or an earlier one did. */
function resultHeading(r: SiteFacts['results'][number], kind: DigestKind, newlyLocked: string[]): string {
  if (kind === 'lock') return `${newlyLocked.includes(r.runId) ? 'Newly locked' : 'Locked earlier'}: ${r.measureName} at ${r.waveName}`;
  return `${r.isPrimary ? 'The result' : 'Another locked result'}: ${r.measureName} at ${r.waveName}`;
}

type SiteResultFacts = SiteFacts['results'][number];
const hiddenWords = 'not shown';

function scoreDistrictRows(r: SiteResultFacts): string[][] {
  const d = r.district;
  return [
    ['Effect size (Hedges’ g)', d.g === null || d.gCi === null ? hiddenWords : `${formatNumber(d.g, 2)} (95% interval ${formatNumber(d.gCi[0], 2)} to ${formatNumber(d.gCi[1], 2)})`],
    ['Improvement index', d.improvementIndex === null ? hiddenWords : `${formatSigned(d.improvementIndex, 0)} percentile points`],
    ['Pre-registered test', `${d.met ? 'Met' : 'Not met'}${d.p === null ? '' : ` (${formatPStatement(d.p)})`}`],
    ['Students analysed', countWords(d.students)],
  ];
}

/** A yes/no result: each arm's yes count of its students and share, the difference in percentage points, the Cox index. */
function yesNoDistrictRows(r: SiteResultFacts, y: NonNullable<SiteResultFacts['yesNo']>): string[][] {
  const d = r.district;
  const points = (x: number | null) => (x === null ? '…' : formatNumber(x * 100, 1));
  const arms = y.arms.map((a) => [
    `Answered yes, ${a.arm} classrooms`,
    a.proportion === null || a.yes.value === null || a.no.value === null ? `${hiddenWords} (${SUPPRESSED_WORDS} in a group)` : `${formatNumber(a.proportion * 100, 0)} % (${a.yes.value} of ${a.yes.value + a.no.value})`,
  ]);
  return [
    ...arms,
    ['Difference', d.estimate === null ? hiddenWords : `${formatSigned(d.estimate * 100, 1)} percentage points${d.ci ? ` (${Math.round(d.confidence * 100)}% interval ${points(d.ci[0])} to ${points(d.ci[1])})` : ''}`],
    ['Effect size (Cox index)', y.coxIndex ? `${formatNumber(y.coxIndex.value, 2)}, improvement index ${formatSigned(y.coxIndex.improvementIndex, 0)}` : d.estimate === null ? hiddenWords : 'undefined: an arm answered all yes or all no'],
    ['Pre-registered test', `${d.met ? 'Met' : 'Not met'}${d.p === null ? '' : ` (${formatPStatement(d.p)})`}`],
    ['Students analysed', countWords(d.students)],
  ];
}

function blocks(facts: SiteFacts, kind: DigestKind, newlyLocked: string[]): Block[] {
  const out: Block[] = [];
  // The newly locked results first, so the e-mail opens with what changed.
  const ordered = kind === 'lock' ? [...facts.results].sort((a, b) => Number(newlyLocked.includes(b.runId)) - Number(newlyLocked.includes(a.runId))) : facts.results;
  const resultBlocks: Block[] = ordered.flatMap((r) => [
    {
      heading: resultHeading(r, kind, newlyLocked),
      // The evidence verdict's final wording only, as the report's headline for this result says it.
      paragraphs: r.evidence ? [...r.sentences, r.evidence] : r.sentences,
      table: {
        head: ['All schools in the study', 'Figure'],
        rows: r.yesNo ? yesNoDistrictRows(r, r.yesNo) : scoreDistrictRows(r),
        numeric: [false, true],
      },
    },
    {
      heading: `${facts.site.name} on its own`,
      table: r.site
        ? {
            head: ['Group', 'Students analysed', r.yesNo ? 'Answered yes' : 'Average score'],
            rows: [
              ...r.site.arms.map((a) => [armWords(a.arm), countCell(a.students), a.mean === null ? 'not shown' : r.yesNo ? `${formatNumber(a.mean * 100, 0)} %` : formatNumber(a.mean, 1)]),
              ['All', countCell(r.site.totalStudents), ''],
            ],
            numeric: [false, true, true],
          }
        : undefined,
      note: r.site?.note ?? `There are no figures for ${facts.site.name} alone in this result: too few of its students were analysed in one of the groups.`,
    },
  ]);
  if (kind === 'lock') out.push(...resultBlocks);

  const p = facts.participation;
  out.push({
    heading: 'Taking part',
    paragraphs: [
      p.classrooms
        ? `${facts.site.name} takes part with ${p.classrooms} ${p.classrooms === 1 ? 'classroom' : 'classrooms'} and ${countWords(p.students)} with scores so far.`
        : `${facts.site.name} has no classrooms in this study yet.`,
    ],
    table: p.arms.length
      ? { head: ['Group', 'Classrooms', 'Students'], rows: p.arms.map((a) => [armWords(a.arm), String(a.classrooms), countCell(a.students)]), numeric: [false, true, true] }
      : undefined,
    note: p.note,
  });

  out.push({
    heading: 'Scores received',
    table: facts.waves.length
      ? {
          head: ['Wave', 'Window', 'Score sheets accepted'],
          rows: facts.waves.map((w) => [
            `${w.name} (${waveStatus[w.status].toLowerCase()})`,
            `${formatDay(w.opensOn)} – ${formatDay(w.closesOn)}`,
            w.sheets ? `${w.accepted} of ${w.sheets} (${formatNumber(w.percentAccepted, 0)}%)${w.submitted ? `, ${w.submitted} awaiting review` : ''}` : 'none expected',
          ]),
          numeric: [false, false, true],
        }
      : undefined,
    paragraphs: facts.waves.length ? undefined : ['No data-collection windows are set yet.'],
  });

  out.push({
    heading: 'Late',
    paragraphs: facts.late.length ? [`These score sheets are still missing after their window closed:`] : ['Nothing is late.'],
    list: facts.late.map((l) => `${l.classroomName}: ${l.measureName}, ${l.waveName} — ${l.returned ? 'returned for corrections' : 'not entered'} (closed ${formatDay(l.closedOn)})`),
  });

  if (kind !== 'lock') out.push(...resultBlocks);
  out.push({ heading: 'Please keep in mind', list: facts.cautions });
  return out;
}

function intro(facts: SiteFacts, kind: DigestKind, name: string, newlyLocked: string[]): string[] {
  const lines = [`Hello ${name},`];
  if (kind === 'lock') {
    const labels = facts.results.filter((r) => newlyLocked.includes(r.runId)).map((r) => `“${r.label}”`);
    const what = labels.length > 1 ? `${labels.length} confirmatory results of “${facts.study.title}”: ${labels.slice(0, -1).join(', ')} and ${labels.at(-1)}` : `a confirmatory result of “${facts.study.title}”${labels.length ? `: ${labels[0]}` : ''}`;
    lines.push(`The research lead has locked ${what}. Here ${labels.length > 1 ? 'they are' : 'it is'} in plain language, with how ${facts.site.name} is taking part.`);
  }
  else if (kind === 'weekly') lines.push(`Here is this week’s summary of how ${facts.site.name} is taking part in “${facts.study.title}”.`);
  else lines.push(`Here is the latest on how ${facts.site.name} is taking part in “${facts.study.title}”.`);
  return lines;
}

function text(facts: SiteFacts, kind: DigestKind, name: string, links: DigestLinks, newlyLocked: string[]): string {
  const parts: string[] = [kindTitle[kind].toUpperCase(), '', ...intro(facts, kind, name, newlyLocked).flatMap((l) => [l, ''])];
  for (const b of blocks(facts, kind, newlyLocked)) {
    parts.push(b.heading, '-'.repeat(Math.min(60, b.heading.length)));
    for (const p of b.paragraphs ?? []) parts.push(p, '');
    if (b.table) {
      const head = b.table.head;
      for (const row of b.table.rows) {
        parts.push(head.length === 2 ? `  ${row[0]}: ${row[1]}` : `  ${row.map((c, i) => (i === 0 ? c : c === '' ? '' : `${head[i]}: ${c}`)).filter(Boolean).join(' · ')}`);
      }
      parts.push('');
    }
    for (const item of b.list ?? []) parts.push(`  • ${item}`);
    if (b.list?.length) parts.push('');
    if (b.note) parts.push(b.note, '');
  }
  parts.push(
    `Open My school: ${links.mySchool}`,
    '',
    `You receive this because you are the principal of ${facts.site.name} in this study.`,
    `Choose how often you get digests (weekly, only when a result is locked, or none): ${links.preferences()}`,
    `Stop these e-mails: ${links.preferences('none')}`,
  );
  return `${parts.join('\n').replace(/\n{3,}/g, '\n\n').trim()}\n`;
}

function tableMjml(t: NonNullable<Block['table']>): string {
  const cell = (c: string, i: number, head: boolean) =>
    `<${head ? 'th scope="col"' : i === 0 ? 'th scope="row"' : 'td'} style="padding:8px 10px;border-bottom:1px solid ${LINE};text-align:${t.numeric?.[i] ? 'right' : 'left'};font-weight:${head || i === 0 ? 600 : 400}">${esc(c)}</${head ? 'th' : i === 0 ? 'th' : 'td'}>`;
  return `<mj-table font-size="15px" line-height="22px" color="${INK}" cellpadding="0" padding="4px 0 8px">
<tr style="background:${PAPER}">${t.head.map((h, i) => cell(h, i, true)).join('')}</tr>
${t.rows.map((r) => `<tr>${r.map((c, i) => cell(c, i, false)).join('')}</tr>`).join('\n')}
</mj-table>`;
}

function html(facts: SiteFacts, kind: DigestKind, name: string, links: DigestLinks, newlyLocked: string[]): string {
  const section = (b: Block) => `
<mj-section background-color="${SURFACE}" padding="4px 24px 12px" border-left="1px solid ${LINE}" border-right="1px solid ${LINE}">
  <mj-column>
    <mj-text font-size="19px" font-weight="600" padding="12px 0 6px">${esc(b.heading)}</mj-text>
    ${(b.paragraphs ?? []).map((p) => `<mj-text padding="4px 0">${esc(p)}</mj-text>`).join('\n')}
    ${b.table ? tableMjml(b.table) : ''}
    ${b.list?.length ? `<mj-text padding="4px 0"><ul style="margin:0;padding-left:20px">${b.list.map((i) => `<li style="margin:0 0 6px">${esc(i)}</li>`).join('')}</ul></mj-text>` : ''}
    ${b.note ? `<mj-text padding="4px 0" color="${MUTED}" font-size="14px">${esc(b.note)}</mj-text>` : ''}
    <mj-divider border-width="1px" border-color="${LINE}" padding="10px 0 0" />
  </mj-column>
</mj-section>`;
  const prefLink = (f: 'weekly' | 'locked' | 'none', label: string) => `<a href="${esc(links.preferences(f))}" style="color:${ACCENT}">${label}</a>`;
  return `<mjml lang="en">
<mj-head>
  <mj-title>${esc(digestSubject(kind, facts, newlyLocked))}</mj-title>
  <mj-preview>${esc(intro(facts, kind, name, newlyLocked)[1])}</mj-preview>
  <mj-attributes>
    <mj-all font-family="${FONT}" />
    <mj-text font-size="16px" line-height="24px" color="${INK}" />
  </mj-attributes>
</mj-head>
<mj-body background-color="${PAPER}" width="620px">
  <mj-section padding="28px 24px 8px">
    <mj-column>
      <mj-text font-size="15px" font-weight="600" color="${ACCENT}" letter-spacing="1px" padding="0">EVENHAND · ${esc(kindTitle[kind].toUpperCase())}</mj-text>
      <mj-text font-size="24px" line-height="30px" font-weight="600" padding="8px 0 0">${esc(facts.site.name)}</mj-text>
      <mj-text color="${MUTED}" padding="2px 0 0">${esc(facts.study.title)}</mj-text>
    </mj-column>
  </mj-section>
  <mj-section background-color="${SURFACE}" padding="16px 24px 4px" border-top="4px solid ${ACCENT}" border-left="1px solid ${LINE}" border-right="1px solid ${LINE}">
    <mj-column>
      ${intro(facts, kind, name, newlyLocked).map((l) => `<mj-text padding="4px 0">${esc(l)}</mj-text>`).join('\n')}
    </mj-column>
  </mj-section>
  ${blocks(facts, kind, newlyLocked).map(section).join('\n')}
  <mj-section background-color="${SURFACE}" padding="8px 24px 24px" border-left="1px solid ${LINE}" border-right="1px solid ${LINE}" border-bottom="1px solid ${LINE}">
    <mj-column>
      <mj-button href="${esc(links.mySchool)}" background-color="${ACCENT}" color="#ffffff" font-size="16px" font-weight="600" border-radius="6px" align="left" padding="8px 0">Open My school</mj-button>
      <mj-text font-size="14px" color="${MUTED}" padding="4px 0">If the button does not work, open this address: ${esc(links.mySchool)}</mj-text>
    </mj-column>
  </mj-section>
  <mj-section padding="16px 24px 32px">
    <mj-column>
      <mj-text font-size="14px" line-height="21px" color="${MUTED}" padding="0">You receive this because you are the principal of ${esc(facts.site.name)} in this study. Get digests ${prefLink('weekly', 'every week')}, ${prefLink('locked', 'only when a result is locked')}, or ${prefLink('none', 'stop these e-mails')}.</mj-text>
    </mj-column>
  </mj-section>
</mj-body>
</mjml>`;
}

/**
 * The digest e-mail: HTML from the MJML template (no images, readable with them off) and its plain-text alternative.
 * A lock digest names the runs its event locked (`newlyLocked`) and lists them first.
 */
export async function renderDigest(facts: SiteFacts, kind: DigestKind, recipientName: string, links: DigestLinks, newlyLocked: string[] = []): Promise<RenderedDigest> {
  const result = await mjml(html(facts, kind, recipientName, links, newlyLocked), { validationLevel: 'strict', fonts: {}, keepComments: false });
  if (result.errors.length) throw new Error(`digest template: ${result.errors.map((e) => e.formattedMessage).join('; ')}`);
  return { subject: digestSubject(kind, facts, newlyLocked), html: result.html, text: text(facts, kind, recipientName, links, newlyLocked) };
}
