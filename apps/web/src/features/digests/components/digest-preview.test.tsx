import type { DigestDetail } from '@evenhand/entities';
import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it } from 'vitest';
import { DigestPreview } from '@/features/digests/components/digest-preview';

const digest: DigestDetail = {
  id: '9f4d7e5b-5a6b-4c7d-8e3f-4a5b6c7d8e9f',
  studyId: '5b0f3f1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b',
  siteId: '6c1a4b2e-2d3e-4f5a-9b0c-1d2e3f4a5b6c',
  siteName: 'Willow Lane Elementary',
  recipient: { id: '0a5e8f6c-6b7c-4d8e-9f4a-5b6c7d8e9f0a', name: 'Dr. Ada Quill', email: 'ada@example.org' },
  kind: 'lock',
  subject: 'The result is locked: Paired reading in grade 4 (Willow Lane Elementary)',
  state: 'sent',
  attempts: 1,
  lastError: null,
  createdAt: '2026-11-30T10:00:00.000Z',
  sentAt: '2026-11-30T10:00:02.000Z',
  nextAttemptAt: null,
  html: '<!doctype html><html><body><h1>Willow Lane Elementary</h1><script>parent.stolen = true</script></body></html>',
  text: 'A RESULT IS LOCKED\n\nHello Dr. Ada Quill,',
};

describe('DigestPreview', () => {
  it('shows the e-mail’s HTML in a frame sandboxed without any permission', () => {
    render(<DigestPreview digest={digest} />);
    const frame = screen.getByTitle('The digest e-mail to Dr. Ada Quill');
    expect(frame.tagName).toBe('IFRAME');
    expect(frame).toHaveAttribute('sandbox', '');
    expect(frame.getAttribute('srcdoc')).toBe(digest.html);
    expect(screen.getByText(digest.subject)).toBeInTheDocument();
    expect(screen.getByText(/ada@example\.org/)).toBeInTheDocument();
  });

  it('switches to the plain-text alternative', async () => {
    render(<DigestPreview digest={digest} />);
    await userEvent.click(screen.getByRole('button', { name: 'Plain text' }));
    expect(screen.queryByTitle('The digest e-mail to Dr. Ada Quill')).not.toBeInTheDocument();
    expect(screen.getByText(/Hello Dr\. Ada Quill,/)).toBeInTheDocument();
    expect(screen.getByRole('button', { name: 'Plain text' })).toHaveAttribute('aria-pressed', 'true');
  });
});
