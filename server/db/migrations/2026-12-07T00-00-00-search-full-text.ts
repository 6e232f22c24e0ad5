import type { QueryInterface } from 'sequelize';

/**
 * Full-text search of published stories (`?q=` on the public list, public.service.ts).
 *
 * One row of `story_search` per publication: a weighted tsvector of everything the published
 * revision says and the names around it, and the plain text snippets are cut from. It is kept
 * by triggers, because publications are written by review and names change in builds and users:
 * - a publication written (statement trigger over the inserted rows, so a bulk load is one pass);
 * - a part added, renamed or removed (row trigger on `parts`), for the build's publications;
 * - a builder's name, login or shop changed (row trigger on `users`, only when one of those changes).
 * Withdrawal needs nothing here: the public list joins `stories` and applies PUBLIC_STORY_SQL, so a
 * withdrawn or draft story is never found whatever its row says.
 *
 * Weights (ts_rank_cd, with the weights the service passes): A title; B summary, claim words,
 * reading and clearance names, part names and serials, tags; C the builder's name, login and shop;
 * D the story's text (Markdown with the claim targets taken out).
 *
 * Figures and serials: the default parser reads `VP-0417` as the word `vp` and the signed integer
 * `-0417`, and the upper end of `0.0047-0.0050` as `-0.0050`, so `0417` or `0.0050` would not find
 * them. Every token with a digit in it (letters and digits joined by - . or /) is also stored
 * whole, and its pieces between - and / that hold a digit, as exact lexemes with the field's
 * weight (`benchproof_exact_vector`); `benchproof_search_query` takes those tokens out of the
 * words of a search and requires them exactly, the rest goes through websearch_to_tsquery
 * (quoted phrases, `or`, `-word`).
 *
 * The text search configuration `benchproof_search` is english with the number-like token types
 * mapped to `simple` (never stemmed, never a stop word) by name, so the search keeps its words if
 * the `english` defaults move, and has one place to add a trade dictionary.
 *
 * The GIN index has fastupdate off, as the trigram ones: written once per publish, read by every
 * search. The trigram indexes stay for partial words and misspellings (the fallback when no story
 * has the words).
 */
const DASHES = '‐‑‒–—−';
const TOKEN = '((?:[[:alnum:]]+[-./])*[[:alnum:]]*[0-9][[:alnum:]]*(?:[-./][[:alnum:]]+)*)';

export async function up({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql(`CREATE TEXT SEARCH CONFIGURATION benchproof_search (COPY = english)`);
  await sql(`ALTER TEXT SEARCH CONFIGURATION benchproof_search
    ALTER MAPPING FOR int, uint, float, sfloat, numword, numhword, hword_numpart, version WITH simple`);

  // Tokens with a digit, whole and by their pieces between - and /, lower case, each once.
  await sql(`CREATE FUNCTION benchproof_exact_terms(doc text) RETURNS text[] LANGUAGE sql IMMUTABLE PARALLEL SAFE AS $$
    SELECT COALESCE(array_agg(term ORDER BY first), '{}') FROM (
      SELECT x.term, min(t.n * 100 + x.k) AS first
        FROM regexp_matches(translate(lower(COALESCE(doc, '')), '${DASHES}', '------'), '${TOKEN}', 'g') WITH ORDINALITY AS t(m, n),
             LATERAL (SELECT t.m[1], 0 UNION ALL
                      SELECT piece, k FROM regexp_split_to_table(t.m[1], '[-/]') WITH ORDINALITY AS p(piece, k) WHERE piece ~ '[0-9]' AND piece <> t.m[1]) AS x(term, k)
       GROUP BY x.term) terms
  $$`);
  // Those terms as a tsvector with positions (so ts_rank_cd counts them) and the field's weight.
  await sql(`CREATE FUNCTION benchproof_exact_vector(doc text, weight "char") RETURNS tsvector LANGUAGE sql IMMUTABLE PARALLEL SAFE AS $$
    SELECT COALESCE(string_agg(format('''%s'':%s%s', term, least(n, 16383), weight), ' ')::tsvector, ''::tsvector)
      FROM unnest(benchproof_exact_terms(doc)) WITH ORDINALITY AS t(term, n)
  $$`);
  // One field of the document: its words and its exact terms, with its weight.
  await sql(`CREATE FUNCTION benchproof_search_field(doc text, weight "char") RETURNS tsvector LANGUAGE sql STABLE PARALLEL SAFE AS $$
    SELECT setweight(to_tsvector('benchproof_search', COALESCE(doc, '')), weight) || benchproof_exact_vector(doc, weight)
  $$`);
  // What a reader typed, as a tsquery: websearch words, and each token with a digit required
  // either exactly (a stored exact term) or as the parser reads it (`0.0047in` holds `0.0047`).
  await sql(`CREATE FUNCTION benchproof_search_query(words text) RETURNS tsquery LANGUAGE plpgsql STABLE PARALLEL SAFE AS $$
    DECLARE
      norm text := translate(lower(COALESCE(words, '')), '${DASHES}', '------');
      result tsquery := websearch_to_tsquery('benchproof_search', regexp_replace(norm, '${TOKEN}', ' ', 'g'));
      token text;
    BEGIN
      FOR token IN SELECT DISTINCT m[1] FROM regexp_matches(norm, '${TOKEN}', 'g') AS m LOOP
        result := result && (format('''%s''', token)::tsquery || phraseto_tsquery('benchproof_search', token));
      END LOOP;
      RETURN result;
    END $$`);
  // A story's text for reading: claim links keep their words, Markdown marks go.
  await sql(`CREATE FUNCTION benchproof_plain_text(body text) RETURNS text LANGUAGE sql IMMUTABLE PARALLEL SAFE AS $$
    SELECT regexp_replace(regexp_replace(regexp_replace(regexp_replace(COALESCE(body, ''),
      '\\]\\([^)]*\\)', '', 'g'),
      '^:::.*$', '', 'gn'),
      '[][*_#>\`]', '', 'g'),
      '\\s+', ' ', 'g')
  $$`);

  await sql(`CREATE TABLE story_search (
    publication_id INTEGER PRIMARY KEY REFERENCES story_publications(id) ON DELETE CASCADE,
    document tsvector NOT NULL,
    snippet_source TEXT NOT NULL
  )`);
  await sql(`CREATE INDEX story_search_document_gin ON story_search USING gin (document) WITH (fastupdate = off)`);

  // The document of each given publication, written or rewritten.
  await sql(`CREATE FUNCTION story_search_refresh(publication_ids integer[]) RETURNS void LANGUAGE sql AS $$
    INSERT INTO story_search (publication_id, document, snippet_source)
    SELECT p.id,
           benchproof_search_field(p.title, 'A')
        || benchproof_search_field(concat_ws(E'\\n', p.summary, claims.words, names.words, parts.words, tags.words), 'B')
        || benchproof_search_field(concat_ws(E'\\n', u.display_name, u.login, u.shop), 'C')
        || benchproof_search_field(benchproof_plain_text(p.body), 'D'),
           -- The summary is on the card already; names and parts read as lists, not run together.
           translate(concat_ws('. ', benchproof_plain_text(p.body), replace(names.words, E'\\n', '; '), replace(parts.words, E'\\n', '; ')), E'\\uE000\\uE001', '')
      FROM story_publications p
      JOIN stories s ON s.id = p.story_id
      JOIN builds b ON b.id = s.build_id
      JOIN users u ON u.id = b.owner_id
      CROSS JOIN LATERAL (SELECT string_agg(c->>'text', E'\\n') AS words FROM jsonb_array_elements(COALESCE(p.evidence->'claims', '[]')) c) claims
      CROSS JOIN LATERAL (
        SELECT string_agg(concat_ws(' ', r->>'name', r->>'partName'), E'\\n') AS words
          FROM (SELECT r FROM jsonb_array_elements(COALESCE(p.evidence->'readings', '[]')) r
                UNION ALL SELECT c FROM jsonb_array_elements(COALESCE(p.evidence->'clearances', '[]')) c) subjects(r)) names
      CROSS JOIN LATERAL (SELECT string_agg(concat_ws(' ', pt.name, pt.serial), E'\\n') AS words FROM parts pt WHERE pt.build_id = b.id) parts
      CROSS JOIN LATERAL (
        SELECT string_agg(tag, ' ') AS words
          FROM jsonb_each(CASE WHEN jsonb_typeof(p.tags) = 'object' THEN p.tags ELSE '{}' END) g,
               jsonb_array_elements_text(CASE WHEN jsonb_typeof(g.value) = 'array' THEN g.value ELSE '[]' END) tag) tags
     WHERE p.id = ANY (publication_ids)
    ON CONFLICT (publication_id) DO UPDATE SET document = EXCLUDED.document, snippet_source = EXCLUDED.snippet_source
  $$`);

  await sql(`CREATE FUNCTION story_search_on_publication() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN PERFORM story_search_refresh(ARRAY(SELECT id FROM added)); RETURN NULL; END $$`);
  await sql(`CREATE TRIGGER story_search_on_publication AFTER INSERT ON story_publications
    REFERENCING NEW TABLE AS added FOR EACH STATEMENT EXECUTE FUNCTION story_search_on_publication()`);

  await sql(`CREATE FUNCTION story_search_on_part() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM story_search_refresh(ARRAY(
        SELECT p.id FROM story_publications p JOIN stories s ON s.id = p.story_id
         WHERE s.build_id IN (CASE WHEN TG_OP = 'INSERT' THEN NULL ELSE OLD.build_id END, CASE WHEN TG_OP = 'DELETE' THEN NULL ELSE NEW.build_id END)));
      RETURN NULL;
    END $$`);
  await sql(`CREATE TRIGGER story_search_on_part AFTER INSERT OR UPDATE OR DELETE ON parts
    FOR EACH ROW EXECUTE FUNCTION story_search_on_part()`);

  await sql(`CREATE FUNCTION story_search_on_builder() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM story_search_refresh(ARRAY(
        SELECT p.id FROM story_publications p JOIN stories s ON s.id = p.story_id JOIN builds b ON b.id = s.build_id WHERE b.owner_id = NEW.id));
      RETURN NULL;
    END $$`);
  await sql(`CREATE TRIGGER story_search_on_builder AFTER UPDATE ON users FOR EACH ROW
    WHEN (OLD.display_name IS DISTINCT FROM NEW.display_name OR OLD.login IS DISTINCT FROM NEW.login OR OLD.shop IS DISTINCT FROM NEW.shop)
    EXECUTE FUNCTION story_search_on_builder()`);

  // Every publication written before this migration.
  await sql(`SELECT story_search_refresh(ARRAY(SELECT id FROM story_publications))`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql('DROP TRIGGER IF EXISTS story_search_on_builder ON users');
  await sql('DROP TRIGGER IF EXISTS story_search_on_part ON parts');
  await sql('DROP TRIGGER IF EXISTS story_search_on_publication ON story_publications');
  await sql('DROP FUNCTION IF EXISTS story_search_on_builder()');
  await sql('DROP FUNCTION IF EXISTS story_search_on_part()');
  await sql('DROP FUNCTION IF EXISTS story_search_on_publication()');
  await sql('DROP FUNCTION IF EXISTS story_search_refresh(integer[])');
  await sql('DROP TABLE IF EXISTS story_search');
  await sql('DROP FUNCTION IF EXISTS benchproof_plain_text(text)');
  await sql('DROP FUNCTION IF EXISTS benchproof_search_query(text)');
  await sql('DROP FUNCTION IF EXISTS benchproof_search_field(text, "char")');
  await sql('DROP FUNCTION IF EXISTS benchproof_exact_vector(text, "char")');
  await sql('DROP FUNCTION IF EXISTS benchproof_exact_terms(text)');
  await sql('DROP TEXT SEARCH CONFIGURATION IF EXISTS benchproof_search');
}
