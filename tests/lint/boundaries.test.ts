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
});
