import { useMemo, useRef, useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import {
  closestCenter,
  DndContext,
  DragOverlay,
  KeyboardCode,
  KeyboardSensor,
  PointerSensor,
  pointerWithin,
  rectIntersection,
  useDraggable,
  useDroppable,
  useSensor,
  useSensors,
  type Announcements,
  type CollisionDetection,
  type DragEndEvent,
  type KeyboardCoordinateGetter,
  type UniqueIdentifier,
} from '@dnd-kit/core';
import type { EntrySummary } from '@shared/schemas/api';
import type { GroupsView } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { EntryStateBadge } from '../../../components/status/entry-state';
import { useCreateGroup } from '../api/create-group';
import { useDeleteGroup } from '../api/delete-group';
import { useMoveEntry } from '../api/move-entry';
import { useRenameGroup } from '../api/rename-group';

type Column = { id: string; groupId: number | null; name: string; entries: string[] };

const UNGROUPED = 'group:none';
const columnId = (groupId: number | null) => (groupId === null ? UNGROUPED : `group:${groupId}`);

export function boardColumns(view: GroupsView): Column[] {
  return [
    ...[...view.groups].sort((a, b) => a.position - b.position || a.name.localeCompare(b.name)).map((g) => ({ id: columnId(g.id), groupId: g.id, name: g.name, entries: g.entries })),
    { id: UNGROUPED, groupId: null, name: 'Ungrouped', entries: view.ungrouped },
  ];
}

/** With a pointer: the column under it. With the keyboard: the column the card overlaps most, else the nearest. */
const collision: CollisionDetection = (args) => {
  const under = pointerWithin(args);
  if (under.length) return under;
  const overlapping = rectIntersection(args);
  return overlapping.length ? overlapping : closestCenter(args);
};

const INSTRUCTIONS =
  'To move an entry to another group, press space or enter on its handle to pick it up, then the left and right arrow keys to choose a group, and space or enter to drop it there. Escape cancels.';

function EntryCard({ entryKey, entry, slug, editable, from }: { entryKey: string; entry?: EntrySummary; slug: string; editable: boolean; from: string }) {
  const { attributes, listeners, setNodeRef, isDragging } = useDraggable({ id: entryKey, data: { from }, disabled: !editable });
  return (
    <li ref={setNodeRef} className={`flex items-start gap-2 rounded-md border border-rule bg-paper-raised px-2 py-1.5 ${isDragging ? 'opacity-40' : ''}`}>
      {editable && (
        <button
          type="button"
          {...attributes}
          {...listeners}
          aria-label={`Move ${entryKey}${entry ? `, ${entry.label}` : ''}`}
          className="mt-0.5 cursor-grab rounded px-0.5 text-ink-muted hover:bg-paper-sunk hover:text-ink active:cursor-grabbing"
        >
          <svg aria-hidden viewBox="0 0 10 16" className="h-4 w-2.5" fill="currentColor">
            {[3, 8, 13].map((y) => (
              <g key={y}>
                <circle cx={2.5} cy={y} r={1.2} />
                <circle cx={7.5} cy={y} r={1.2} />
              </g>
            ))}
          </svg>
        </button>
      )}
      <CardBody entryKey={entryKey} entry={entry} slug={slug} />
    </li>
  );
}

function CardBody({ entryKey, entry, slug }: { entryKey: string; entry?: EntrySummary; slug?: string }) {
  return (
    <div className="min-w-0 flex-1">
      <div className="flex items-center justify-between gap-2">
        {slug ? (
          <Link to={`/a/${slug}/entries/${encodeURIComponent(entryKey)}`} className="truncate font-mono text-xs font-medium text-teal-ink hover:underline">
            {entryKey}
          </Link>
        ) : (
          <span className="truncate font-mono text-xs font-medium text-teal-ink">{entryKey}</span>
        )}
        {entry && <EntryStateBadge state={entry.state} />}
      </div>
      {entry && (
        <p className="truncate text-xs text-ink-soft" title={`${entry.label}${entry.owner ? `, owned by ${entry.owner.name}` : ''}`}>
          {entry.label}
        </p>
      )}
    </div>
  );
}

function RenameForm({ slug, groupId, name, onDone }: { slug: string; groupId: number; name: string; onDone: () => void }) {
  const [value, setValue] = useState(name);
  const rename = useRenameGroup(slug);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!value.trim() || value.trim() === name) return onDone();
    rename.mutate({ id: groupId, name: value.trim() }, { onSuccess: onDone });
  };
  return (
    <form onSubmit={submit} aria-label={`Rename group ${name}`} className="flex flex-col gap-1.5">
      <TextField label="New name" value={value} onChange={(e) => setValue(e.target.value)} autoFocus />
      <FormError error={rename.error} />
      <div className="flex gap-1.5">
        <Button size="sm" type="submit" variant="primary" busy={rename.isPending}>
          Save name
        </Button>
        <Button size="sm" variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

function DeleteGroup({ slug, column }: { slug: string; column: Column }) {
  const [confirming, setConfirming] = useState(false);
  const remove = useDeleteGroup(slug);
  if (!confirming)
    return (
      <Button size="sm" variant="ghost" aria-label={`Delete group ${column.name}`} onClick={() => setConfirming(true)}>
        Delete
      </Button>
    );
  return (
    <div className="flex flex-col gap-1 rounded-md border border-danger/30 bg-danger-soft/40 px-2 py-1.5 text-xs">
      <p>
        Delete “{column.name}”?{column.entries.length > 0 && ` Its ${column.entries.length} ${column.entries.length === 1 ? 'entry becomes' : 'entries become'} ungrouped.`}
      </p>
      <FormError error={remove.error} />
      <div className="flex gap-1.5">
        <Button size="sm" variant="danger" busy={remove.isPending} onClick={() => column.groupId !== null && remove.mutate(column.groupId)}>
          Delete group
        </Button>
        <Button size="sm" variant="ghost" onClick={() => setConfirming(false)}>
          Keep
        </Button>
      </div>
    </div>
  );
}

function BoardColumn({ slug, column, entries, editable, isOver }: { slug: string; column: Column; entries: Map<string, EntrySummary>; editable: boolean; isOver: boolean }) {
  const { setNodeRef } = useDroppable({ id: column.id, disabled: !editable });
  const [renaming, setRenaming] = useState(false);
  const headingId = `${column.id}-heading`;
  return (
    <section
      ref={setNodeRef}
      aria-labelledby={headingId}
      className={`flex min-h-40 flex-col gap-2 rounded-lg border px-2.5 py-2 transition-colors ${
        isOver ? 'border-teal bg-teal-soft/50' : column.groupId === null ? 'border-dashed border-rule-strong bg-paper-sunk/40' : 'border-rule bg-paper-sunk/60'
      }`}
    >
      <header className="flex flex-col gap-1">
        <div className="flex items-baseline justify-between gap-2">
          <h2 id={headingId} className="truncate text-sm font-semibold">
            {column.name}
          </h2>
          <span className="text-xs text-ink-muted tabular-nums" title={`${column.entries.length} entries in this group`}>
            {column.entries.length}
          </span>
        </div>
        {editable && column.groupId !== null && !renaming && (
          <div className="flex gap-1">
            <Button size="sm" variant="ghost" aria-label={`Rename group ${column.name}`} onClick={() => setRenaming(true)}>
              Rename
            </Button>
            <DeleteGroup slug={slug} column={column} />
          </div>
        )}
        {renaming && column.groupId !== null && <RenameForm slug={slug} groupId={column.groupId} name={column.name} onDone={() => setRenaming(false)} />}
      </header>
      <ul className="flex flex-col gap-1.5" aria-label={`Entries in ${column.name}`}>
        {column.entries.map((k) => (
          <EntryCard key={k} entryKey={k} entry={entries.get(k)} slug={slug} editable={editable} from={column.id} />
        ))}
      </ul>
      {column.entries.length === 0 && <p className="py-3 text-center text-xs text-ink-muted">{editable ? 'Drop entries here' : 'No entries'}</p>}
    </section>
  );
}

function NewGroupForm({ slug }: { slug: string }) {
  const [name, setName] = useState('');
  const create = useCreateGroup(slug);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!name.trim()) return;
    create.mutate(name.trim(), { onSuccess: () => setName('') });
  };
  return (
    <form onSubmit={submit} aria-label="Create a group" className="flex flex-wrap items-end gap-2">
      <TextField label="New group name" placeholder="e.g. jets, leptons, theory" value={name} onChange={(e) => setName(e.target.value)} className="w-64" />
      <Button type="submit" variant="primary" busy={create.isPending} disabled={!name.trim()}>
        Add group
      </Button>
      <div className="basis-full">
        <FormError error={create.error} />
      </div>
    </form>
  );
}

/** Columns per group plus "Ungrouped"; entries are dragged between them with the pointer or the keyboard. */
export function GroupsBoard({ slug, view, entries, editable }: { slug: string; view: GroupsView; entries: EntrySummary[]; editable: boolean }) {
  const columns = useMemo(() => boardColumns(view), [view]);
  const byKey = useMemo(() => new Map(entries.map((e) => [e.key, e])), [entries]);
  const move = useMoveEntry(slug);
  const [active, setActive] = useState<string | null>(null);
  const [overId, setOverId] = useState<UniqueIdentifier | null>(null);

  // The keyboard getter reads the latest column order without re-creating the sensors.
  const order = useRef<string[]>([]);
  order.current = columns.map((c) => c.id);

  const columnJump: KeyboardCoordinateGetter = (event, { active: dragged, currentCoordinates, context }) => {
    const step = event.code === KeyboardCode.Right || event.code === KeyboardCode.Down ? 1 : event.code === KeyboardCode.Left || event.code === KeyboardCode.Up ? -1 : 0;
    if (!step) return undefined;
    event.preventDefault();
    const ids = order.current;
    const from = context.over?.id ?? (context.draggableNodes.get(dragged)?.data.current?.from as string | undefined);
    const at = from !== undefined ? ids.indexOf(String(from)) : -1;
    const next = ids[Math.max(0, Math.min(ids.length - 1, at + step))];
    const rect = next ? context.droppableRects.get(next) : undefined;
    if (!rect) return currentCoordinates;
    return { x: rect.left + 6, y: rect.top + 64 };
  };

  const sensors = useSensors(useSensor(PointerSensor, { activationConstraint: { distance: 4 } }), useSensor(KeyboardSensor, { coordinateGetter: columnJump }));

  const nameOf = (id: UniqueIdentifier | undefined | null) => columns.find((c) => c.id === id)?.name ?? 'no group';
  const labelOf = (id: UniqueIdentifier) => {
    const e = byKey.get(String(id));
    return e ? `${e.key} (${e.label})` : String(id);
  };
  const fromOf = (a: { data: { current?: Record<string, unknown> } }) => a.data.current?.from as string | undefined;

  const announcements: Announcements = {
    onDragStart: ({ active: a }) => `Picked up ${labelOf(a.id)} from ${nameOf(fromOf(a))}. Left and right arrows choose a group; space drops; escape cancels.`,
    onDragOver: ({ active: a, over }) => (over ? `${labelOf(a.id)} is over ${nameOf(over.id)}.` : `${labelOf(a.id)} is not over a group.`),
    onDragEnd: ({ active: a, over }) =>
      !over
        ? `${labelOf(a.id)} was dropped outside the groups and stays in ${nameOf(fromOf(a))}.`
        : over.id === fromOf(a)
          ? `${labelOf(a.id)} stays in ${nameOf(over.id)}.`
          : `${labelOf(a.id)} was moved from ${nameOf(fromOf(a))} to ${nameOf(over.id)}.`,
    onDragCancel: ({ active: a }) => `Moving ${labelOf(a.id)} was cancelled; it stays in ${nameOf(fromOf(a))}.`,
  };

  const onDragEnd = ({ active: a, over }: DragEndEvent) => {
    setActive(null);
    setOverId(null);
    if (!over || over.id === fromOf(a)) return;
    const target = columns.find((c) => c.id === over.id);
    if (target) move.mutate({ entry: String(a.id), groupId: target.groupId });
  };

  return (
    <div className="flex flex-col gap-4">
      {editable && <NewGroupForm slug={slug} />}
      {move.error && (
        <div className="flex flex-col gap-1">
          <FormError error={move.error} />
        </div>
      )}
      {editable && <p className="text-xs text-ink-muted">{INSTRUCTIONS}</p>}
      <DndContext
        sensors={sensors}
        collisionDetection={collision}
        accessibility={{ announcements, screenReaderInstructions: { draggable: INSTRUCTIONS } }}
        onDragStart={(e) => setActive(String(e.active.id))}
        onDragOver={(e) => setOverId(e.over?.id ?? null)}
        onDragCancel={() => {
          setActive(null);
          setOverId(null);
        }}
        onDragEnd={onDragEnd}
      >
        <div className="grid grid-cols-[repeat(auto-fill,minmax(14rem,1fr))] gap-3">
          {columns.map((c) => (
            <BoardColumn key={c.id} slug={slug} column={c} entries={byKey} editable={editable} isOver={active !== null && overId === c.id} />
          ))}
        </div>
        <DragOverlay dropAnimation={null}>
          {active ? (
            <div className="flex w-56 items-start gap-2 rounded-md border border-teal bg-paper-raised px-2 py-1.5 shadow-lg">
              <CardBody entryKey={active} entry={byKey.get(active)} />
            </div>
          ) : null}
        </DragOverlay>
      </DndContext>
    </div>
  );
}
