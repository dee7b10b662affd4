import type { InputHTMLAttributes } from 'react';
import { cn } from '../../lib/cn';

export interface SearchInputProps extends Omit<InputHTMLAttributes<HTMLInputElement>, 'type' | 'onChange' | 'value'> {
  value: string;
  onValueChange: (value: string) => void;
  /** Accessible name (the input has no visible label). */
  label: string;
}

export function SearchInput({ value, onValueChange, label, className, ...rest }: SearchInputProps) {
  return (
    <div className={cn('relative', className)}>
      <svg viewBox="0 0 20 20" className="pointer-events-none absolute top-1/2 left-2.5 size-4 -translate-y-1/2 text-ink-faint" aria-hidden="true">
        <circle cx="8.5" cy="8.5" r="5.5" fill="none" stroke="currentColor" strokeWidth="1.6" />
        <path d="M13 13l4 4" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
      </svg>
      <input
        type="search"
        aria-label={label}
        value={value}
        onChange={(e) => onValueChange(e.target.value)}
        className="h-9 w-64 rounded-md border border-line-strong bg-surface pr-3 pl-8 text-sm text-ink placeholder:text-ink-faint focus-visible:outline-2 focus-visible:outline-offset-1 focus-visible:outline-focus"
        {...rest}
      />
    </div>
  );
}
