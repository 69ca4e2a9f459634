import type { FitResultHead } from '@shared/schemas/fits';
import { Badge } from '../ui/badge';

/** Whether a fit's minimiser reached its stopping rule. */
export function ConvergenceBadge({ status }: { status: FitResultHead['status'] }) {
  return status === 'converged' ? (
    <Badge tone="teal" title="The minimiser reached the stopping rule: Newton decrement gᵀH⁻¹g/2 below 1e-9">
      Converged
    </Badge>
  ) : (
    <Badge tone="danger" title="The minimiser did not reach the stopping rule; no result is shown">
      Not converged
    </Badge>
  );
}
