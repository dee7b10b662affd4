import { cn } from '../../lib/cn';

/** One entry of a chart's key: a swatch (Tailwind classes for its colour and shape) and its words. */
export function ChartKey({ swatch, label, shape = 'h-2.5 w-4 rounded-sm' }: { swatch: string; label: string; shape?: string }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <span aria-hidden="true" className={cn('inline-block', shape, swatch)} />
      {label}
    </span>
  );
}
