import type { Action } from '@shared/permissions';

/** Plain-language description of each action, for "what your role may do". */
export const ACTION_LABELS: Record<Action, string> = {
  'analysis.read': 'Read everything this analysis shows',
  'members.manage': 'Add members, change their roles, remove them',
  'model.edit': 'Edit the model: regions, binning, processes, templates, data',
  'entry.create': 'Create register entries and assign owners',
  'entry.edit': 'Edit any register entry',
  'entry.editOwn': 'Edit the register entries you own',
  'entry.review': 'Review entries: accept or send back',
  'variation.upload': 'Upload up/down variations',
  'groups.edit': 'Move entries between groups',
  'version.freeze': 'Freeze a model version',
  'version.approve': 'Freeze a version for approval; set the plot labels',
  'fit.run': 'Run fits',
  'question.raise': 'Ask questions on parameters, regions, bins, fits and versions',
  'question.answer': 'Answer questions',
  'question.resolve': 'Resolve questions',
  'blinding.request': 'Request unblinding',
  'blinding.decide': 'Approve or refuse unblinding',
};
