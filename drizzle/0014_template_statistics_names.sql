-- The template-statistics parameters of results stored before are renamed from gamma_<region>_<bin>
-- to tstat:<region>:<bin>, in their list, in the parameters at a bound and in the warnings. The
-- bin is the number after the last underscore, so region keys with underscores keep them.
UPDATE fits
SET result = regexp_replace(result::text, 'gamma_([A-Za-z0-9][A-Za-z0-9_.-]*)_([0-9]+)', 'tstat:\1:\2', 'g')::jsonb
WHERE result IS NOT NULL AND result::text LIKE '%gamma\_%';
