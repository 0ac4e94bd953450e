import type { DigestDetail } from '@evenhand/entities';
import { useState } from 'react';
import { Button } from '@/components/ui/button';

/**
 * The digest exactly as the principal receives it. The HTML goes into a sandboxed frame with no
 * permissions at all: no scripts, no forms, no navigation out of the preview.
 */
export function DigestPreview({ digest }: { digest: DigestDetail }) {
  const [view, setView] = useState<'html' | 'text'>('html');
  return (
    <div className="space-y-3">
      <dl className="grid gap-x-4 gap-y-1 text-sm sm:grid-cols-[auto_1fr]">
        <dt className="font-semibold">To</dt>
        <dd>
          {digest.recipient.name} &lt;{digest.recipient.email}&gt;
        </dd>
        <dt className="font-semibold">Subject</dt>
        <dd>{digest.subject}</dd>
      </dl>
      <div role="group" aria-label="Show the digest" className="flex gap-2">
        <Button size="sm" variant={view === 'html' ? 'primary' : 'secondary'} aria-pressed={view === 'html'} onClick={() => setView('html')}>
          As the e-mail
        </Button>
        <Button size="sm" variant={view === 'text' ? 'primary' : 'secondary'} aria-pressed={view === 'text'} onClick={() => setView('text')}>
          Plain text
        </Button>
      </div>
      {view === 'html' ? (
        <iframe
          title={`The digest e-mail to ${digest.recipient.name}`}
          sandbox=""
          srcDoc={digest.html}
          className="h-[60vh] w-full rounded-md border border-line bg-paper"
        />
      ) : (
        <pre className="h-[60vh] overflow-auto rounded-md border border-line bg-surface p-4 font-mono text-sm whitespace-pre-wrap" role="region" aria-label="Digest text" tabIndex={0}>
          {digest.text}
        </pre>
      )}
    </div>
  );
}
