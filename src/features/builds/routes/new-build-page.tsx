import type { LoaderFunctionArgs } from 'react-router-dom';
import { useNavigate } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { ButtonLink } from '@/components/ui/button';
import { PageHeader } from '@/components/ui/page-header';
import { useToast } from '@/components/ui/toast';
import { useCreateBuild } from '../api/build-mutations';
import { BuildForm } from '../components/build-form';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  return null;
}

/** Start a build, then go straight to its workspace to add clips. */
export function Component() {
  const createBuild = useCreateBuild();
  const navigate = useNavigate();
  const { toast } = useToast();

  return (
    <div className="max-w-2xl">
      <PageHeader
        eyebrow="My builds"
        title="New build"
        description="Name the job and list the parts you will measure. You can change all of it later."
      />
      <BuildForm
        submitLabel="Create build"
        pendingLabel="Creating…"
        secondaryAction={
          <ButtonLink to="/builds" variant="quiet">
            Cancel
          </ButtonLink>
        }
        onSubmit={async (values) => {
          const build = await createBuild.mutateAsync(values);
          toast({ tone: 'success', title: 'Build created', description: 'Add clips of your bench work next.' });
          navigate(`/builds/${build.id}`);
        }}
      />
    </div>
  );
}
