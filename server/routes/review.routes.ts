import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { blindingLog, changeBlindingSettings, decideUnblinding, requestUnblinding } from '../services/blinding.service';
import { diagnoseInFit, runDiagnosisChecks } from '../services/diagnosis.service';
import { getUnblindingChecklist, getVersionChecklist } from '../services/approval.service';
import { listStaleEffects } from '../services/stale-effects.service';
import { answerQuestion, getQuestion, listQuestions, raiseQuestion, stepQuestion } from '../services/questions.service';
import { baseUrl } from './base-url';
import { idParam, route, type ApiRoute } from './route';

const fitIdParam = idParam('fit id');
const questionIdParam = idParam('question id');

/** The convener's review loop: a parameter's diagnosis, questions on parameters, blinding, and the approval checklists. */
export const reviewRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/analyses/:slug/fits/:fitId/diagnosis/:parameter', auth.may('analysis.read'), async (req, res) => {
    res.json(await diagnoseInFit(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), String(req.params.parameter)));
  }),
  route('post', '/api/analyses/:slug/fits/:fitId/diagnosis/:parameter/checks', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await runDiagnosisChecks(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), String(req.params.parameter), req.body));
  }),

  route('get', '/api/analyses/:slug/questions', auth.may('analysis.read'), async (req, res) => {
    res.json(await listQuestions(ctx, accessOf(req), req.query));
  }),
  route('post', '/api/analyses/:slug/questions', auth.may('question.raise'), async (req, res) => {
    res.status(201).json(await raiseQuestion(ctx, accessOf(req), req.body, baseUrl(ctx, req)));
  }),
  route('get', '/api/analyses/:slug/questions/:questionId', auth.may('analysis.read'), async (req, res) => {
    res.json(await getQuestion(ctx, accessOf(req), questionIdParam.parse(req.params.questionId)));
  }),
  route('post', '/api/analyses/:slug/questions/:questionId/answers', auth.may('question.answer'), async (req, res) => {
    res.status(201).json(await answerQuestion(ctx, accessOf(req), questionIdParam.parse(req.params.questionId), req.body, baseUrl(ctx, req)));
  }),
  route('post', '/api/analyses/:slug/questions/:questionId/resolve', auth.may('question.resolve'), async (req, res) => {
    res.json(await stepQuestion(ctx, accessOf(req), questionIdParam.parse(req.params.questionId), 'resolve', req.body, baseUrl(ctx, req)));
  }),
  route('post', '/api/analyses/:slug/questions/:questionId/reopen', auth.may('question.resolve'), async (req, res) => {
    res.json(await stepQuestion(ctx, accessOf(req), questionIdParam.parse(req.params.questionId), 'reopen', req.body, baseUrl(ctx, req)));
  }),

  route('get', '/api/analyses/:slug/blinding', auth.may('analysis.read'), async (req, res) => {
    res.json(await blindingLog(ctx, accessOf(req)));
  }),
  route('get', '/api/analyses/:slug/blinding/checklist', auth.may('analysis.read'), async (req, res) => {
    res.json(await getUnblindingChecklist(ctx, accessOf(req)));
  }),
  route('get', '/api/analyses/:slug/versions/approval-checklist', auth.may('analysis.read'), async (req, res) => {
    res.json(await getVersionChecklist(ctx, accessOf(req)));
  }),
  route('get', '/api/analyses/:slug/versions/stale-effects', auth.may('analysis.read'), async (req, res) => {
    res.json(await listStaleEffects(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/blinding/request', auth.may('blinding.request'), async (req, res) => {
    res.json(await requestUnblinding(ctx, accessOf(req), req.body, baseUrl(ctx, req)));
  }),
  route('post', '/api/analyses/:slug/blinding/decision', auth.may('blinding.decide'), async (req, res) => {
    res.json(await decideUnblinding(ctx, accessOf(req), req.body, baseUrl(ctx, req)));
  }),
  route('put', '/api/analyses/:slug/blinding/settings', auth.may('blinding.decide'), async (req, res) => {
    res.json(await changeBlindingSettings(ctx, accessOf(req), req.body));
  }),
];
