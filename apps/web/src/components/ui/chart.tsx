import * as Plot from '@observablehq/plot';
import { useEffect, useRef, useState, type ReactNode } from 'react';

/** The app's chart colours: one per arm, the accent for the intervention. */
export const chartColors = {
  intervention: '#2f6f5e',
  comparison: '#9a6a2f',
  ink: '#1f2328',
  muted: '#55595f',
  line: '#b9ae9d',
} as const;

interface ChartProps {
  /**
   * Builds the Observable Plot options for a given width. Keep it stable (useCallback or a module-level
   * function) so the figure is redrawn only when its data change.
   */
  plot: (width: number) => Plot.PlotOptions;
  /** One or two sentences saying what the chart shows; screen readers hear this instead of the drawing. */
  summary: string;
  /** The visible caption under the figure. */
  caption?: ReactNode;
  /** The chart's text equivalent (usually a table of the same numbers), shown after the figure. */
  children?: ReactNode;
  className?: string;
}

/**
 * An Observable Plot figure mounted in React, with a caption and a text equivalent. The drawing is an
 * image to assistive technology (role="img" with the summary); the numbers are in `children`.
 */
export function Chart({ plot, summary, caption, children, className = '' }: ChartProps) {
  const frame = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(640);

  useEffect(() => {
    const node = frame.current;
    if (!node || typeof ResizeObserver === 'undefined') return;
    const observer = new ResizeObserver(([entry]) => {
      const next = Math.floor(entry.contentRect.width);
      if (next > 0) setWidth((old) => (Math.abs(old - next) > 8 ? next : old));
    });
    observer.observe(node);
    return () => observer.disconnect();
  }, []);

  useEffect(() => {
    const node = frame.current;
    if (!node) return;
    const figure = Plot.plot({
      style: { fontFamily: 'inherit', fontSize: '13px', color: chartColors.ink, background: 'transparent', overflow: 'visible' },
      ...plot(width),
      width,
    });
    // The frame is the image (role="img" with the summary): Plot's own labels on <g> elements are not allowed there.
    for (const labelled of figure.querySelectorAll('[aria-label], [aria-description]')) {
      labelled.removeAttribute('aria-label');
      labelled.removeAttribute('aria-description');
    }
    figure.setAttribute('aria-hidden', 'true');
    node.replaceChildren(figure);
    return () => figure.remove();
  }, [plot, width]);

  return (
    <figure className={`chart ${className}`}>
      <div ref={frame} role="img" aria-label={summary} className="w-full" />
      {caption && <figcaption className="mt-2 text-sm text-ink-muted">{caption}</figcaption>}
      {children && <div className="mt-3">{children}</div>}
    </figure>
  );
}
