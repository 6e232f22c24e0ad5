import { useMemo } from 'react';
import { useQuery } from '@tanstack/react-query';
import { authQueries } from '../api/auth-queries';
import { defaultUnitsOf, type DefaultUnits } from './default-units';

/** The signed-in account's default units, from the `/api/me` answer every page already has. */
export function useDefaultUnits(): DefaultUnits {
  const me = useQuery(authQueries.me());
  const { system, temperatureScale } = defaultUnitsOf(me.data);
  // One object per choice, so effects that depend on it run when the choice changes only.
  return useMemo(() => ({ system, temperatureScale }), [system, temperatureScale]);
}
