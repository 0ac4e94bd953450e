import type { Classroom } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useCallback, useState } from 'react';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { Section } from '@/components/ui/section';
import { useSession } from '@/features/auth/api';
import {
  cohortsQueryOptions,
  rosterImportsQueryOptions,
  studySitesQueryOptions,
  useAddClassroom,
  useAddCohort,
  useEnrolSite,
  useImportClassrooms,
  useImportRoster,
  usePreviewRoster,
  useUpdateClassroom,
} from '@/features/sites/api';
import { AddClassroomForm, AddCohortForm, EditClassroomForm } from '@/features/sites/components/classroom-form';
import { ClassroomImport } from '@/features/sites/components/classroom-import';
import { ClassroomsTable } from '@/features/sites/components/classrooms-table';
import { EnrolSiteForm } from '@/features/sites/components/enrol-site-form';
import { RosterHistory } from '@/features/sites/components/roster-history';
import { RosterImportPanel } from '@/features/sites/components/roster-import';
import { SitesTable } from '@/features/sites/components/sites-table';
import { hasRole } from '@/lib/navigation';
import { districtSitesQueryOptions } from '@/lib/queries';
import { studyClassroomsQueryOptions, useCurrentStudy } from '@/lib/study';

export function sitesLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    const studyId = params.studyId!;
    await Promise.all([
      queryClient.ensureQueryData(studySitesQueryOptions(studyId)),
      queryClient.ensureQueryData(cohortsQueryOptions(studyId)),
      queryClient.ensureQueryData(studyClassroomsQueryOptions(studyId)),
    ]);
    return null;
  };
}

type Open = 'enrol' | 'classroom' | 'import' | 'roster' | null;

export function SitesPage() {
  const study = useCurrentStudy();
  const grants = useSession().data?.roles ?? [];
  const coordinator = hasRole(grants, 'coordinator');
  const seesImports = hasRole(grants, 'coordinator', 'research_lead');
  const sites = useQuery(studySitesQueryOptions(study.id));
  const cohorts = useQuery(cohortsQueryOptions(study.id));
  const classrooms = useQuery(studyClassroomsQueryOptions(study.id));
  const district = useQuery({ ...districtSitesQueryOptions(), enabled: coordinator });
  const rosterImports = useQuery({ ...rosterImportsQueryOptions(study.id), enabled: seesImports });
  const enrol = useEnrolSite(study.id);
  const addCohort = useAddCohort(study.id);
  const addClassroom = useAddClassroom(study.id);
  const updateClassroom = useUpdateClassroom(study.id);
  const importClassrooms = useImportClassrooms(study.id);
  const previewRoster = usePreviewRoster(study.id);
  const importRoster = useImportRoster(study.id);
  const [open, setOpen] = useState<Open>(null);
  const [editing, setEditing] = useState<Classroom | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const onEdit = useCallback((c: Classroom) => {
    setNotice(null);
    setEditing(c);
  }, []);

  const siteList = sites.data?.items ?? [];
  const cohortList = cohorts.data?.items ?? [];
  const enrolled = new Set(siteList.map((s) => s.id));
  const available = (district.data?.items ?? []).filter((s) => !enrolled.has(s.id));
  const drawn = study.drawCommittedAt !== null;
  const show = (which: Open) => {
    setNotice(null);
    setOpen(which);
  };

  return (
    <div className="space-y-12">
      <div aria-live="polite">{notice && <Alert tone="success">{notice}</Alert>}</div>

      <Section
        title="Sites"
        description="The schools taking part, each with its principal."
        actions={
          coordinator && (
            <>
              <Button variant="secondary" onClick={() => show('roster')}>
                Import a OneRoster export
              </Button>
              <Button onClick={() => show('enrol')}>Enrol a site</Button>
            </>
          )
        }
      >
        <SitesTable sites={siteList} loading={sites.isPending} error={sites.error} />
      </Section>

      <Section
        title="Classrooms"
        description={
          drawn
            ? 'The draw is committed, so classrooms can no longer be added; each shows the arm it is in.'
            : 'Each classroom with its cohort and teacher. The draw assigns them to an arm, within each site.'
        }
        actions={
          coordinator &&
          !drawn && (
            <>
              <Button variant="secondary" onClick={() => show('import')} disabled={siteList.length === 0}>
                Add from a CSV file
              </Button>
              <Button onClick={() => show('classroom')} disabled={siteList.length === 0}>
                Add a classroom
              </Button>
            </>
          )
        }
      >
        {coordinator && !drawn && siteList.length === 0 && <p className="text-ink-muted">Enrol a site first; classrooms belong to one.</p>}
        <ClassroomsTable
          classrooms={classrooms.data?.items ?? []}
          sites={siteList}
          loading={classrooms.isPending}
          error={classrooms.error}
          onEdit={coordinator ? onEdit : undefined}
        />
      </Section>

      <Section title="Cohorts" description="Groups of classrooms followed together, such as a grade in a school year.">
        {cohortList.length === 0 ? (
          <p className="text-ink-muted">No cohorts yet.</p>
        ) : (
          <ul className="flex flex-wrap gap-2">
            {cohortList.map((c) => (
              <li key={c.id} className="rounded-full border border-line bg-surface px-3 py-1">
                {c.name}
              </li>
            ))}
          </ul>
        )}
        {coordinator && !drawn && <AddCohortForm onAdd={(name) => addCohort.mutateAsync(name)} />}
      </Section>

      {seesImports && (
        <Section title="Roster imports" description="Each OneRoster export imported into this study: when, by whom, and what it changed.">
          <RosterHistory imports={rosterImports.data?.items ?? []} loading={rosterImports.isPending} error={rosterImports.error} />
        </Section>
      )}

      <Dialog open={open === 'enrol'} title="Enrol a site" onClose={() => setOpen(null)}>
        <EnrolSiteForm
          available={available}
          onCancel={() => setOpen(null)}
          onEnrol={async (input) => {
            const site = await enrol.mutateAsync(input);
            setOpen(null);
            setNotice(
              site.principal?.invitationPending
                ? `${site.name} is enrolled; ${site.principal.name} is invited by e-mail.`
                : `${site.name} is enrolled.`,
            );
          }}
        />
      </Dialog>

      <Dialog open={open === 'classroom'} title="Add a classroom" onClose={() => setOpen(null)}>
        <AddClassroomForm
          sites={siteList}
          cohorts={cohortList}
          onCancel={() => setOpen(null)}
          onAdd={async (input) => {
            const classroom = await addClassroom.mutateAsync(input);
            setOpen(null);
            setNotice(
              classroom.teacher.invitationPending
                ? `${classroom.name} at ${classroom.siteName} is added; ${classroom.teacher.name} is invited by e-mail.`
                : `${classroom.name} at ${classroom.siteName} is added.`,
            );
          }}
        />
      </Dialog>

      <Dialog open={open === 'import'} title="Add classrooms from a CSV file" onClose={() => setOpen(null)}>
        <ClassroomImport sites={siteList} onImport={(file) => importClassrooms.mutateAsync(file)} onClose={() => setOpen(null)} />
      </Dialog>

      <Dialog open={open === 'roster'} title="Import a OneRoster export" onClose={() => setOpen(null)}>
        <RosterImportPanel
          onPreview={(files) => previewRoster.mutateAsync(files)}
          onImport={(files, selection) => importRoster.mutateAsync({ files, selection })}
          onClose={() => setOpen(null)}
        />
      </Dialog>

      <Dialog open={editing !== null} title={`Edit ${editing?.name ?? 'classroom'}`} onClose={() => setEditing(null)}>
        {editing && (
          <EditClassroomForm
            classroom={editing}
            cohorts={cohortList}
            onCancel={() => setEditing(null)}
            onSave={async (changes) => {
              const classroom = await updateClassroom.mutateAsync({ id: editing.id, changes });
              setEditing(null);
              setNotice(`The changes to ${classroom.name} at ${classroom.siteName} are saved.`);
            }}
          />
        )}
      </Dialog>
    </div>
  );
}
