import type { ReactNode } from 'react';
import { createBrowserRouter, Outlet } from 'react-router';
import { AnalysisLayout } from './layout/analysis-layout';
import { AppShell, RequireAdmin } from './layout/app-shell';
import { NotFound, RootError, RouteError } from '../components/errors/route-error';
import { SignInRoute } from './routes/sign-in';
import { InvitationRoute } from './routes/invitation';
import { AnalysesRoute } from './routes/analyses';
import { OverviewRoute } from './routes/analysis/overview';
import { RegisterRoute } from './routes/analysis/register';
import { PruningRoute } from './routes/analysis/pruning';
import { EntryRoute } from './routes/analysis/entry';
import { ModelRoute } from './routes/analysis/model';
import { GroupsRoute } from './routes/analysis/groups';
import { FitsRoute } from './routes/analysis/fits';
import { FitResultRoute } from './routes/analysis/fit-result';
import { ReviewSetRoute } from './routes/analysis/review-set';
import { HypothesesRoute } from './routes/analysis/hypotheses';
import { HypothesisScanRoute } from './routes/analysis/hypothesis-scan';
import { QuestionsRoute } from './routes/analysis/questions';
import { QuestionRoute } from './routes/analysis/question';
import { MembersRoute } from './routes/analysis/members';
import { AccountsRoute } from './routes/admin/accounts';
import { OutboxRoute } from './routes/admin/outbox';

/** Each screen has its own error boundary, so a failing screen leaves the navigation usable. */
const screen = (element: ReactNode) => ({ element, errorElement: <RouteError /> });

export const routes = [
  {
    element: <Outlet />,
    errorElement: <RootError />,
    children: [
      { path: '/sign-in', ...screen(<SignInRoute />) },
      { path: '/invite/:token', ...screen(<InvitationRoute />) },
      {
        element: <AppShell />,
        errorElement: <RouteError />,
        children: [
          { index: true, ...screen(<AnalysesRoute />) },
          {
            path: 'a/:slug',
            element: <AnalysisLayout />,
            errorElement: <RouteError />,
            children: [
              { index: true, ...screen(<OverviewRoute />) },
              { path: 'register', ...screen(<RegisterRoute />) },
              { path: 'entries/:key', ...screen(<EntryRoute />) },
              { path: 'pruning', ...screen(<PruningRoute />) },
              { path: 'model', ...screen(<ModelRoute />) },
              { path: 'groups', ...screen(<GroupsRoute />) },
              { path: 'fits', ...screen(<FitsRoute />) },
              { path: 'fits/:fitId/:tab?', ...screen(<FitResultRoute />) },
              { path: 'review-sets/:setId', ...screen(<ReviewSetRoute />) },
              { path: 'hypotheses', ...screen(<HypothesesRoute />) },
              { path: 'hypotheses/:scanId', ...screen(<HypothesisScanRoute />) },
              { path: 'questions', ...screen(<QuestionsRoute />) },
              { path: 'questions/:id', ...screen(<QuestionRoute />) },
              { path: 'members', ...screen(<MembersRoute />) },
            ],
          },
          {
            path: 'admin',
            element: <RequireAdmin />,
            errorElement: <RouteError />,
            children: [
              { path: 'accounts', ...screen(<AccountsRoute />) },
              { path: 'outbox', ...screen(<OutboxRoute />) },
            ],
          },
          { path: '*', element: <NotFound /> },
        ],
      },
    ],
  },
];

export function createRouter() {
  return createBrowserRouter(routes);
}
