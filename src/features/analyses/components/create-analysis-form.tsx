import { useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { useCreateAnalysis } from '../api/create-analysis';
import { Button } from '../../../components/ui/button';
import { CheckboxField, TextAreaField, TextField } from '../../../components/ui/field';
import { FormError } from '../../../components/ui/error-notice';
import { isApiRequestError } from '../../../lib/api-client';

/** Admin only: a new analysis starts blinded unless the admin says otherwise. */
export function CreateAnalysisForm() {
  const [slug, setSlug] = useState('');
  const [name, setName] = useState('');
  const [description, setDescription] = useState('');
  const [blinded, setBlinded] = useState(true);
  const create = useCreateAnalysis();
  const navigate = useNavigate();
  const err = isApiRequestError(create.error) ? create.error : null;

  function submit(e: FormEvent) {
    e.preventDefault();
    create.mutate(
      { slug: slug.trim(), name, description, blinded },
      { onSuccess: (a) => navigate(`/a/${a.slug}/members`) },
    );
  }

  return (
    <form onSubmit={submit} aria-label="New analysis" className="flex flex-col gap-3" noValidate>
      {create.error && <FormError error={create.error} />}
      <TextField label="Name" name="name" required value={name} onChange={(e) => setName(e.target.value)} error={err?.fieldMessage('name')} />
      <TextField
        label="Short name (in links)"
        name="slug"
        required
        value={slug}
        onChange={(e) => setSlug(e.target.value)}
        error={err?.fieldMessage('slug')}
        hint="Lower-case letters and digits separated by single hyphens, e.g. narrow-resonance-2025."
        spellCheck={false}
      />
      <TextAreaField label="Description" name="description" rows={3} value={description} onChange={(e) => setDescription(e.target.value)} error={err?.fieldMessage('description')} />
      <CheckboxField
        label="Start blinded"
        checked={blinded}
        onChange={(e) => setBlinded(e.target.checked)}
        hint="Signal-region data stay withheld until a convener approves unblinding."
      />
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create analysis
        </Button>
      </div>
    </form>
  );
}
