import { fileURLToPath } from 'node:url';
import { ESLint } from 'eslint';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../..', import.meta.url));
const eslint = new ESLint({ cwd: root });

async function rulesBroken(filePath: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(code, { filePath: `${root}/${filePath}` });
  return (result?.messages ?? []).map((m) => m.ruleId ?? m.message);
}

describe('the layer boundaries', () => {
  it('keep React, the DOM, Node, the database and zod out of sim/', async () => {
    const broken = await rulesBroken(
      'sim/boundary-probe.ts',
      [
        "import { useState } from 'react';",
        "import { readFileSync } from 'node:fs';",
        "import pg from 'pg';",
        "import { z } from 'zod';",
        'export const probe = [useState, readFileSync, pg, z, document.title, Math.random(), Date.now()];',
      ].join('\n'),
    );
    expect(broken.filter((r) => r === 'no-restricted-imports')).toHaveLength(4);
    expect(broken).toContain('no-restricted-globals');
    expect(broken).toContain('no-restricted-properties');
  });

  it('keep the rest of the project out of sim/', async () => {
    const broken = await rulesBroken('sim/boundary-probe.ts', "import { readEnv } from '../server/env.ts';\nexport const probe = readEnv;\n");
    expect(broken).toContain('import-x/no-restricted-paths');
  });

  it('keep server code out of the client', async () => {
    const broken = await rulesBroken('src/boundary-probe.ts', "import { createApp } from '../server/app.ts';\nexport const probe = createApp;\n");
    expect(broken).toContain('import-x/no-restricted-paths');
  });

  it('keep client and server out of shared/', async () => {
    const broken = await rulesBroken('shared/boundary-probe.ts', "import { paths } from '../src/config/paths.ts';\nexport const probe = paths;\n");
    expect(broken).toContain('import-x/no-restricted-paths');
  });

  it('let sim/ import itself and shared/ import sim/', async () => {
    expect(await rulesBroken('sim/boundary-probe.ts', "import type { Fault } from './faults.ts';\nexport type Probe = Fault;\n")).toEqual([]);
    expect(await rulesBroken('shared/boundary-probe.ts', "import type { Fault } from '../sim/faults.ts';\nexport type Probe = Fault;\n")).toEqual([]);
  });

  it('keep the local LTI platform out of the server, and queries out of the LTI route file', async () => {
    const platform = await rulesBroken('server/lti/boundary-probe.ts', "import { startLocalPlatform } from './local-platform.ts';\nexport const probe = startLocalPlatform;\n");
    expect(platform).toContain('import-x/no-restricted-paths');
    const routes = await rulesBroken('server/lti/routes.ts', "import { eq } from 'drizzle-orm';\nexport const probe = eq;\n");
    expect(routes).toContain('no-restricted-imports');
    expect(await rulesBroken('tests/server/boundary-probe.ts', "import { startLocalPlatform } from '../../server/lti/local-platform.ts';\nexport const probe = startLocalPlatform;\n")).toEqual([]);
  });

  it('keep queries out of the route files of every domain, and let its other modules make them', async () => {
    for (const file of ['server/classes/routes.ts', 'server/accounts/user-routes.ts', 'server/grading/sign-off-routes.ts']) {
      expect(await rulesBroken(file, "import { eq } from 'drizzle-orm';\nexport const probe = eq;\n")).toContain('no-restricted-imports');
      expect(await rulesBroken(file, "import { users } from '../db/schema.ts';\nexport const probe = users;\n")).toContain('no-restricted-imports');
    }
    expect(await rulesBroken('server/classes/boundary-probe.ts', "import { eq } from 'drizzle-orm';\nimport { users } from '../db/schema.ts';\nexport const probe = [eq, users];\n")).toEqual([]);
  });

  it('keep http/ and db/ at the bottom of the server: they import no domain', async () => {
    const http = await rulesBroken('server/http/boundary-probe.ts', "import { currentUser } from '../accounts/guard.ts';\nexport const probe = currentUser;\n");
    expect(http).toContain('import-x/no-restricted-paths');
    const db = await rulesBroken('server/db/boundary-probe.ts', "import { hashPassword } from '../accounts/passwords.ts';\nexport const probe = hashPassword;\n");
    expect(db).toContain('import-x/no-restricted-paths');
    const routeList = await rulesBroken('server/http/boundary-probe.ts', "import { allRouteGroups } from '../routes.ts';\nexport const probe = allRouteGroups;\n");
    expect(routeList).toContain('import-x/no-restricted-paths');
    expect(await rulesBroken('server/http/boundary-probe.ts', "import type { Db } from '../db/client.ts';\nimport type { AppContext } from '../context.ts';\nexport type Probe = [Db, AppContext];\n")).toEqual([]);
    expect(await rulesBroken('server/accounts/boundary-probe.ts', "import { HttpError } from '../http/errors.ts';\nimport { users } from '../db/schema.ts';\nexport const probe = [HttpError, users];\n")).toEqual([]);
  });
});
