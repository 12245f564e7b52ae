import type { Role } from '$lib/server/db/schema';
import { PURCHASERS } from '$lib/server/auth/roles';

/**
 * Who may see purchase requests and receive goods against them: purchasers, and the stockroom
 * (which takes deliveries). Creating and stepping requests stays with PURCHASERS (requests.ts
 * checks the role again per change).
 */
export const REQUEST_VIEWERS: readonly Role[] = [...PURCHASERS, 'stockroom'];
