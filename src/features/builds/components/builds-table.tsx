import { Link } from 'react-router-dom';
import type { Build } from '@shared/builds/build.schema';
import { Table, TBody, THead, Td, Th, Tr } from '@/components/ui/table';
import { isoDayAndClock } from '@/lib/dates';


/** The builder's builds, one per row, each opening its workspace. */
export function BuildsTable({ builds }: { builds: Build[] }) {
  return (
    <Table caption="Your builds, newest first" captionHidden>
      <THead>
        <Tr>
          <Th>Build</Th>
          <Th>What is being built</Th>
          <Th numeric>Parts</Th>
          <Th numeric>Clips</Th>
          <Th numeric>Updated</Th>
        </Tr>
      </THead>
      <TBody>
        {builds.map((build) => (
          <Tr key={build.id}>
            <Td className="font-medium">
              <Link to={`/builds/${build.id}`}>{build.title}</Link>
            </Td>
            <Td className="max-w-md text-ink-muted">
              <span className="line-clamp-2">{build.subject || <span className="sr-only">not given</span>}</span>
            </Td>
            <Td numeric>{build.parts.length}</Td>
            <Td numeric>{build.clipCount}</Td>
            <Td numeric>
              <time dateTime={build.updatedAt}>{formatUpdated(build.updatedAt)}</time>
            </Td>
          </Tr>
        ))}
      </TBody>
    </Table>
  );
}

const formatUpdated = isoDayAndClock;
