import { useState } from 'react';

/** Which editor of the model screen is open; one at a time, beside what it edits. */
export type Editor =
  | { kind: 'region-new' }
  | { kind: 'region'; key: string }
  | { kind: 'observed'; key: string }
  | { kind: 'process-new' }
  | { kind: 'process'; key: string }
  | { kind: 'norm-new' }
  | { kind: 'template'; region: string; process: string }
  | { kind: 'hypothesis-parameter' }
  | { kind: 'hypothesis-new' };

/** The open editor, shared by the model screen's panels: opening one closes any other. */
export type EditorControl = { current: Editor | null; is: (e: Editor) => boolean; open: (e: Editor) => void; close: () => void };

export function useEditor(): EditorControl {
  const [current, setCurrent] = useState<Editor | null>(null);
  return { current, is: (e) => JSON.stringify(e) === JSON.stringify(current), open: setCurrent, close: () => setCurrent(null) };
}
