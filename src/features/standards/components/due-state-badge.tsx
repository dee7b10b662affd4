import type { DueState } from '../../../../shared/schemas/standards';
import { Badge } from '../../../components/ui/badge';

const LABEL: Record<DueState, string> = { 'in-date': 'In date', 'due-soon': 'Due soon', expired: 'Expired' };
const TONE = { 'in-date': 'ok', 'due-soon': 'warn', expired: 'danger' } as const;

export function DueStateBadge({ state }: { state: DueState }) {
  return (
    <Badge tone={TONE[state]} dot>
      {LABEL[state]}
    </Badge>
  );
}
