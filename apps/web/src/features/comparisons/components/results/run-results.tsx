import type { Comparison, Run, RunResults } from '@evenhand/entities';
import type { ReactNode } from 'react';
import { ClusteringResult, MultiplicityResult, PrimaryResult } from '@/features/comparisons/components/results/primary-result';
import { SiteForest } from '@/features/comparisons/components/results/site-forest';
import { DescriptivesTable, DiagnosticsTable, SensitivityTable } from '@/features/comparisons/components/results/tables';
import { YesNoNotes } from '@/features/comparisons/components/results/yes-no-result';

function Section({ id, title, intro, children }: { id: string; title: string; intro?: ReactNode; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="space-y-3">
      <h3 id={id} className="text-xl font-semibold">
        {title}
      </h3>
      {intro && <p className="max-w-prose text-ink-muted">{intro}</p>}
      {children}
    </section>
  );
}

/** The cautions that travel with the numbers: kept beside them, never in a footnote. */
export function Cautions({ cautions }: { cautions: string[] }) {
  return (
    <aside aria-labelledby="cautions" className="self-start rounded-lg border border-caution/40 bg-caution-soft p-5">
      <h3 id="cautions" className="text-lg font-semibold">
        Read these numbers with care
      </h3>
      <ul className="mt-3 list-disc space-y-2 pl-5">
        {cautions.map((c) => (
          <li key={c}>{c}</li>
        ))}
      </ul>
    </aside>
  );
}

/** A run's results in Evenhand's order: the registered primary result first, then what qualifies it. */
export function RunResultsView({ run, results }: { run: Run; results: RunResults; comparison: Comparison | undefined }) {
  return (
    <div className="space-y-10">
      <div className="grid gap-6 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <PrimaryResult results={results} />
        <Cautions cautions={results.cautions} />
      </div>
      <ClusteringResult results={results} />
      <MultiplicityResult run={run} />
      {results.yesNo ? (
        // A yes/no answer is 0 or 1: means, SDs, t tests, g, normality and per-site g would read it as a score.
        <Section id="notes" title="Notes on this analysis">
          <YesNoNotes results={results} />
        </Section>
      ) : (
        <ScoreSections results={results} />
      )}
    </div>
  );
}

/** The sections that read a score: the arms' descriptives, sensitivity checks, diagnostics and the per-site forest plot. */
function ScoreSections({ results }: { results: RunResults }) {
  return (
    <>
      <Section id="arms" title="The two arms">
        <DescriptivesTable results={results} />
      </Section>
      <Section
        id="sensitivity"
        title="Sensitivity checks"
        intro="Other reasonable ways to analyse the same scores. They are not the registered test; they show how much the conclusion depends on its choice."
      >
        <SensitivityTable results={results} />
      </Section>
      <Section id="diagnostics" title="Diagnostics">
        <DiagnosticsTable results={results} />
      </Section>
      <Section id="sites" title="Site by site" intro="The effect size in each site, and the random-effects estimate across sites.">
        <SiteForest results={results} />
      </Section>
    </>
  );
}
