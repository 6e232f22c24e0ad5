import { Link } from 'react-router-dom';
import type { LibrarySpec } from '@shared/specs/spec-library.schema';
import { Badge } from '@/components/ui/badge';
import { Table, TBody, THead, Td, Th, Tr } from '@/components/ui/table';
import { bandSummary, isInventedForDemo, specSourceKindNames } from '../lib/spec-format';

/** The library as a table: each spec's newest figures, where they come from, and whose it is. */
export function SpecsTable({ specs, myId }: { specs: LibrarySpec[]; myId: number | null }) {
  return (
    <Table caption="Specs in the library" captionHidden maxHeight="none">
      <THead>
        <Tr>
          <Th>Spec</Th>
          <Th>Applies to</Th>
          <Th>Band (latest version)</Th>
          <Th>Source</Th>
          <Th numeric>Version</Th>
          <Th>Kept by</Th>
        </Tr>
      </THead>
      <TBody>
        {specs.map((spec) => (
          <Tr key={spec.id}>
            <Td className="min-w-44 font-medium">
              <Link to={`/specs/${spec.id}`}>{spec.name}</Link>
              {isInventedForDemo(spec.latest) && (
                <Badge className="ml-1.5 align-middle font-normal" title="The figures of this starter spec are invented for the demo">
                  demo figures
                </Badge>
              )}
            </Td>
            <Td className="min-w-36 text-ink-muted">{spec.appliesTo || <span className="sr-only">not given</span>}</Td>
            <Td mono className="min-w-56 text-xs">
              {bandSummary(spec.latest)}
            </Td>
            <Td className="min-w-56 text-xs">
              <span className="font-medium">{specSourceKindNames[spec.latest.source.kind]}</span>
              <span className="line-clamp-2 text-ink-muted">{spec.latest.source.text}</span>
            </Td>
            <Td numeric>v{spec.latest.version}</Td>
            <Td className="text-sm whitespace-nowrap">
              {spec.ownerId === myId ? 'You' : spec.ownerName}
              {!spec.shared && (
                <Badge className="ml-1.5" title="Only you (and moderators) can see it">
                  not shared
                </Badge>
              )}
            </Td>
          </Tr>
        ))}
      </TBody>
    </Table>
  );
}
