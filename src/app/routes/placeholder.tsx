import type { ReactNode } from 'react';
import { EmptyState } from '../../components/ui/empty-state';
import { PageHeader } from '../../components/ui/page-header';

/** A page whose feature is not built yet: says what will appear, shows no invented data. */
export function PlaceholderPage({ title, summary, headline, details }: { title: string; summary: string; headline: string; details: ReactNode }) {
  return (
    <>
      <PageHeader title={title} description={summary} />
      <EmptyState variant="not-built" title={headline} description={details} />
    </>
  );
}
