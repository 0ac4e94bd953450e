import { useQuery } from '@tanstack/react-query';
import { useId } from 'react';
import { Alert } from '@/components/ui/alert';
import { Loading } from '@/components/ui/spinner';
import { useSession } from '@/features/auth/api';
import { toDoQueryOptions } from '@/features/home/api';
import { ToDoList } from '@/features/home/components/to-do-list';
import { homePathFor } from '@/lib/navigation';

/** "Waiting for you" on a person's home page; on any other page (an admin reading Studies) it stays out of the way. */
export function ToDoPanel({ home }: { home: string }) {
  const grants = useSession().data?.roles ?? [];
  const isHome = homePathFor(grants) === home;
  const toDo = useQuery({ ...toDoQueryOptions(), enabled: isHome });
  const titleId = useId();
  if (!isHome) return null;
  return (
    <section aria-labelledby={titleId} className="mb-8 rounded-lg border border-line bg-surface p-5">
      <h2 id={titleId} className="mb-3 text-xl font-semibold">
        Waiting for you
      </h2>
      {toDo.isPending ? (
        <Loading label="Looking for what waits for you…" />
      ) : toDo.error ? (
        <Alert tone="error">{toDo.error.message}</Alert>
      ) : (
        <ToDoList items={toDo.data.items} grants={grants} />
      )}
    </section>
  );
}
