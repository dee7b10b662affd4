import type { QueryClient } from '@tanstack/react-query';
import { RegisterPage, type RegisterPageConfig } from '../../components/registers/register-page';
import { useMe } from '../../features/auth/api/get-me';
import { canEditRegisters } from '../../lib/authorization';
import { RouteErrorBoundary } from './route-error';

/**
 * The route module of one register (instruments, standards): its loader starts the first page's
 * query, the page is the shared register page, editable by the roles that may edit registers.
 */
export function registerRoute<T extends { id: string }, I>(config: RegisterPageConfig<T, I>) {
  return {
    createLoader: (queryClient: QueryClient) => () => {
      void queryClient.prefetchQuery(config.api.listQueryOptions());
      return null;
    },
    Component: function Register() {
      const me = useMe().data;
      return <RegisterPage config={config} canEdit={!!me && canEditRegisters(me.role)} />;
    },
    ErrorBoundary: RouteErrorBoundary,
  };
}
