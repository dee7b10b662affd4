import { IdParamSchema } from '../../../../shared/schemas/users';
import type { CertificateService } from '../../../services/certificate.service';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** `GET /api/jobs/:id/certificate.pdf`: the calibration certificate (marked draft until approved). */
export function certificateRoutes(certificates: CertificateService) {
  const t = routeTable('/api/jobs');
  const one = { params: IdParamSchema };
  t.add('get', '/:id/certificate.pdf', 'jobs.read', validate(one), async (_req, res) => {
    const { pdf, fileName, draft } = await certificates.pdf(input(res, one).params.id);
    res.set({
      'Content-Type': 'application/pdf',
      'Content-Disposition': `inline; filename="${fileName.replace(/[^\w.-]/g, '_')}"`,
      'Cache-Control': draft ? 'no-store' : 'private, max-age=60',
      'X-Content-Type-Options': 'nosniff',
    });
    res.send(pdf);
  });
  return t;
}
