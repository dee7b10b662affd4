import { NavLink } from 'react-router';
import type { Role } from '../../../shared/schemas/auth';
import { canOpen, type Area } from '../../lib/authorization';
import { useReviewInbox } from '../../lib/review-inbox';
import { cn } from '../../lib/cn';

export interface NavItem {
  area: Area;
  label: string;
  to: string;
}

/** Navigation in our own names (DESIGN.md §7). */
export const NAV_ITEMS: readonly NavItem[] = [
  { area: 'queue', label: 'Queue', to: '/queue' },
  { area: 'instruments', label: 'Instruments', to: '/instruments' },
  { area: 'standards', label: 'Standards', to: '/standards' },
  { area: 'bench', label: 'Bench', to: '/bench' },
  { area: 'records', label: 'Records', to: '/records' },
  { area: 'review', label: 'Review', to: '/review' },
  { area: 'audit', label: 'Audit', to: '/audit' },
  { area: 'users', label: 'Users', to: '/users' },
  { area: 'outbox', label: 'Outbox', to: '/outbox' },
];

export function navItemsFor(role: Role): NavItem[] {
  return NAV_ITEMS.filter((i) => canOpen(role, i.area));
}

/** How many jobs await review (leads): a count beside the Review link, none when zero. */
function ReviewCount() {
  const n = useReviewInbox(true).data?.count ?? 0;
  if (!n) return null;
  return (
    <span className="num ml-2 rounded-full bg-accent px-1.5 text-xs leading-5 text-accent-ink" data-testid="review-count" aria-label={`${n} awaiting review`}>
      {n}
    </span>
  );
}

export interface AppNavProps {
  role: Role;
  className?: string;
}

/** Primary navigation; shows only what the role may open. */
export function AppNav({ role, className }: AppNavProps) {
  const items = navItemsFor(role);
  const adminStart = items.findIndex((i) => i.area === 'audit');
  return (
    <nav aria-label="Main" className={className}>
      <ul className="flex flex-col gap-1">
        {items.map((item, idx) => (
          <li key={item.area} className={cn(idx === adminStart && 'mt-3 border-t border-line pt-3 lg:mt-4 lg:pt-4')}>
            <NavLink
              to={item.to}
              data-testid={`nav-${item.label.toLowerCase()}`}
              className={({ isActive }) =>
                cn(
                  'flex items-center rounded-md px-3 py-2 text-sm font-medium whitespace-nowrap transition-colors',
                  'focus-visible:outline-2 focus-visible:outline-offset-1 focus-visible:outline-focus',
                  isActive ? 'bg-accent-soft text-accent' : 'text-ink-muted hover:bg-sunken hover:text-ink',
                )
              }
            >
              {item.label}
              {item.area === 'review' && <ReviewCount />}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}
