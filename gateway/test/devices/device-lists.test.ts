import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bedSortFields, monitorSortFields, profileSortFields } from '@ebbgate/shared';
import { startTestGatewayAs, type SignedInClient, type TestGateway } from '../support/harness';
import { corvaneProfile } from './fixtures';

// Server paging of the device lists against the contract every list endpoint shares
// (`pageQuerySchema` / `pageOf` in shared/src/schemas/common.ts): offset paging with
// page/pageSize, a total of all matching rows, sort on whitelisted fields only (common practice).
// Expected orders come from JavaScript's own sort of the names the test made; the names use
// upper-case letters, digits and one hyphen in the same place, so code-unit order and the
// database collation agree (common practice).

let gw: TestGateway;
let integrator: SignedInClient;
beforeAll(async () => ({ gw, client: integrator } = await startTestGatewayAs('integrator')));
afterAll(async () => gw?.stop());

interface Paged<T> {
  items: T[];
  page: number;
  pageSize: number;
  total: number;
}

/** Reads pages 1..n of a list with the given query and checks each page's envelope. */
async function walk<T>(path: string, query: string, pageSize: number): Promise<{ pages: Paged<T>[]; all: T[] }> {
  const pages: Paged<T>[] = [];
  for (let page = 1; page <= 20; page++) {
    const res = await integrator.get(`${path}?${query}&pageSize=${pageSize}&page=${page}`);
    expect(res.status).toBe(200);
    const body = res.body as Paged<T>;
    expect(body.page).toBe(page);
    expect(body.pageSize).toBe(pageSize);
    pages.push(body);
    if (page * pageSize >= body.total) break;
  }
  return { pages, all: pages.flatMap((p) => p.items) };
}

const expectBadQuery = async (path: string, field: string) => {
  const res = await integrator.get(path);
  expect(res.status).toBe(400);
  // RFC 9457 problem details naming the bad field.
  expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
  expect((res.body.errors as { path: string }[]).map((e) => e.path)).toContain(`query.${field}`);
};

describe('GET /profiles (server paging)', () => {
  const names = ['PGT-D', 'PGT-A', 'PGT-E', 'PGT-C', 'PGT-B'];
  beforeAll(async () => {
    for (const [i, name] of names.entries()) {
      const manufacturer = i % 2 ? 'Quillmark Devices' : 'Corvane Instruments';
      await integrator.post('/api/v1/profiles', { ...corvaneProfile(name), manufacturer, model: `QX-${i}` }).expect(201);
    }
  });

  it('pages a search in name order, every page telling the same total', async () => {
    const { pages, all } = await walk<{ name: string }>('/api/v1/profiles', 'search=PGT-&sort=name&order=asc', 2);
    expect(pages.map((p) => p.items.length)).toEqual([2, 2, 1]);
    expect(pages.every((p) => p.total === names.length)).toBe(true);
    expect(all.map((p) => p.name)).toEqual([...names].sort());
    const desc = await walk<{ name: string }>('/api/v1/profiles', 'search=PGT-&sort=name&order=desc', 10);
    expect(desc.all.map((p) => p.name)).toEqual([...names].sort().reverse());
  });

  it('searches the manufacturer and the model too, taking LIKE wildcards literally', async () => {
    const quill = (await integrator.get('/api/v1/profiles?search=quillmark&pageSize=50')).body as Paged<{ name: string; manufacturer: string }>;
    expect(quill.total).toBe(names.filter((_, i) => i % 2).length);
    expect(quill.items.every((p) => p.manufacturer === 'Quillmark Devices')).toBe(true);
    const model = (await integrator.get('/api/v1/profiles?search=QX-3')).body as Paged<{ name: string }>;
    expect(model.items.map((p) => p.name)).toEqual([names[3]]);
    // `%` and `_` are LIKE wildcards (MariaDB reference, "LIKE"); typed by a user they mean themselves.
    expect((await integrator.get('/api/v1/profiles?search=%25')).body.total).toBe(0);
    expect((await integrator.get('/api/v1/profiles?search=PGT_')).body.total).toBe(0);
  });

  it('refuses a sort field outside the whitelist and a page size over the limit', async () => {
    await expectBadQuery('/api/v1/profiles?sort=notes', 'sort');
    await expectBadQuery('/api/v1/profiles?sort=name%3BDROP%20TABLE%20bed', 'sort');
    await expectBadQuery('/api/v1/profiles?pageSize=501', 'pageSize');
    await expectBadQuery('/api/v1/profiles?page=0', 'page');
  });
});

describe('GET /monitors (server paging)', () => {
  const idents = ['PGM-0004', 'PGM-0001', 'PGM-0005', 'PGM-0003', 'PGM-0002'];
  const disabled = new Set(['PGM-0002', 'PGM-0005']);
  const ids = new Map<string, string>();
  let profileA: string;
  let profileB: string;
  let bed: string;
  beforeAll(async () => {
    profileA = (await integrator.post('/api/v1/profiles', corvaneProfile('PGM-PROFILE-A')).expect(201)).body.id;
    profileB = (await integrator.post('/api/v1/profiles', corvaneProfile('PGM-PROFILE-B')).expect(201)).body.id;
    bed = (await integrator.post('/api/v1/beds', { name: 'PGM-BED', unit: 'PGM-UNIT', locationIdentifier: 'LOC-PGM' }).expect(201)).body.id;
    for (const [i, identifier] of idents.entries()) {
      const body = { identifier, profileId: i < 3 ? profileA : profileB, bedId: identifier === 'PGM-0003' ? bed : null, enabled: !disabled.has(identifier) };
      ids.set(identifier, (await integrator.post('/api/v1/monitors', body).expect(201)).body.id);
    }
    await integrator.post(`/api/v1/monitors/${ids.get('PGM-0005')}/api-key`).expect(201);
  });

  it('pages in identifier order and still says which monitor has a key', async () => {
    const { pages, all } = await walk<{ identifier: string; hasApiKey: boolean }>('/api/v1/monitors', 'search=PGM-&sort=identifier&order=asc', 2);
    expect(pages.map((p) => p.items.length)).toEqual([2, 2, 1]);
    expect(all.map((m) => m.identifier)).toEqual([...idents].sort());
    expect(all.filter((m) => m.hasApiKey).map((m) => m.identifier)).toEqual(['PGM-0005']);
  });

  it('filters by enabled, profile and bed, and sorts on enabled', async () => {
    const off = (await integrator.get('/api/v1/monitors?enabled=false&search=PGM-')).body as Paged<{ identifier: string; enabled: boolean }>;
    expect(off.items.map((m) => m.identifier).sort()).toEqual([...disabled].sort());
    expect(off.total).toBe(disabled.size);
    const on = (await integrator.get('/api/v1/monitors?enabled=true&search=PGM-')).body as Paged<{ enabled: boolean }>;
    expect(on.total).toBe(idents.length - disabled.size);
    const byProfile = (await integrator.get(`/api/v1/monitors?profileId=${profileB}`)).body as Paged<{ identifier: string }>;
    expect(byProfile.items.map((m) => m.identifier).sort()).toEqual(idents.slice(3).sort());
    const byBed = (await integrator.get(`/api/v1/monitors?bedId=${bed}`)).body as Paged<{ identifier: string }>;
    expect(byBed.items.map((m) => m.identifier)).toEqual(['PGM-0003']);
    const sorted = await walk<{ enabled: boolean }>('/api/v1/monitors', 'search=PGM-&sort=enabled&order=desc', 2);
    const flags = sorted.all.map((m) => m.enabled);
    expect(flags).toEqual([...flags].sort((a, b) => Number(b) - Number(a)));
  });

  it('refuses an unknown sort and an enabled value that is not true/false', async () => {
    await expectBadQuery('/api/v1/monitors?sort=bed_id', 'sort');
    await expectBadQuery('/api/v1/monitors?enabled=yes', 'enabled');
  });
});

describe('GET /beds (server paging)', () => {
  const beds = [
    { name: 'PGB-3', unit: 'PGU-WEST', locationIdentifier: 'LOC-PGB-30' },
    { name: 'PGB-1', unit: 'PGU-WEST', locationIdentifier: 'LOC-PGB-10' },
    { name: 'PGB-5', unit: 'PGU-EAST', locationIdentifier: 'LOC-PGB-50' },
    { name: 'PGB-2', unit: 'PGU-EAST', locationIdentifier: 'LOC-PGB-20' },
    { name: 'PGB-4', unit: 'PGU-WEST', locationIdentifier: 'LOC-PGB-40' },
  ];
  const byUnitThenName = (a: { unit: string; name: string }, b: { unit: string; name: string }) =>
    a.unit === b.unit ? (a.name < b.name ? -1 : 1) : a.unit < b.unit ? -1 : 1;
  let monitorOnBed4: string;
  beforeAll(async () => {
    const ids = new Map<string, string>();
    for (const b of beds) ids.set(b.name, (await integrator.post('/api/v1/beds', b).expect(201)).body.id);
    monitorOnBed4 = (await integrator.post('/api/v1/monitors', { identifier: 'PGB-MON-4', bedId: ids.get('PGB-4') }).expect(201)).body.id;
  });

  it('pages unit by unit when unsorted, and by any whitelisted column when asked', async () => {
    const natural = await walk<{ name: string }>('/api/v1/beds', 'search=PGB-', 2);
    expect(natural.pages.map((p) => p.items.length)).toEqual([2, 2, 1]);
    expect(natural.all.map((b) => b.name)).toEqual([...beds].sort(byUnitThenName).map((b) => b.name));
    const byLocation = await walk<{ locationIdentifier: string }>('/api/v1/beds', 'search=PGB-&sort=locationIdentifier&order=desc', 3);
    expect(byLocation.all.map((b) => b.locationIdentifier)).toEqual(
      beds
        .map((b) => b.locationIdentifier)
        .sort()
        .reverse(),
    );
  });

  it('filters by unit and searches name, unit and EHR location; each bed still names its monitor', async () => {
    const west = (await integrator.get('/api/v1/beds?unit=PGU-WEST&sort=name&order=asc')).body as Paged<{ name: string; monitorId: string | null }>;
    expect(west.items.map((b) => b.name)).toEqual(
      beds
        .filter((b) => b.unit === 'PGU-WEST')
        .map((b) => b.name)
        .sort(),
    );
    expect(west.items.find((b) => b.name === 'PGB-4')?.monitorId).toBe(monitorOnBed4);
    expect(west.items.filter((b) => b.monitorId).length).toBe(1);
    const loc = (await integrator.get('/api/v1/beds?search=LOC-PGB-20')).body as Paged<{ name: string }>;
    expect(loc.items.map((b) => b.name)).toEqual(['PGB-2']);
    expect((await integrator.get('/api/v1/beds?search=PGU-EAST')).body.total).toBe(beds.filter((b) => b.unit === 'PGU-EAST').length);
  });

  it('refuses an unknown sort field', async () => {
    await expectBadQuery('/api/v1/beds?sort=monitorId', 'sort');
  });
});

describe('the API description of the device lists', () => {
  it('documents the paging, sort whitelist and filters of each list (OpenAPI 3 parameters)', async () => {
    const res = await integrator.get('/api/v1/openapi.json');
    expect(res.status).toBe(200);
    const paths = res.body.paths as Record<string, { get?: { parameters?: { name: string; in: string; schema?: { enum?: string[] } }[] } }>;
    const params = (p: string) => Object.entries(paths).find(([k]) => k.endsWith(p))?.[1].get?.parameters ?? [];
    for (const [p, filters, sorts] of [
      ['/profiles', ['search'], profileSortFields],
      ['/monitors', ['search', 'profileId', 'bedId', 'enabled'], monitorSortFields],
      ['/beds', ['search', 'unit'], bedSortFields],
    ] as const) {
      const names = params(p)
        .filter((x) => x.in === 'query')
        .map((x) => x.name);
      expect(names).toEqual(expect.arrayContaining(['page', 'pageSize', 'sort', 'order', ...filters]));
      expect(params(p).find((x) => x.name === 'sort')?.schema?.enum).toEqual([...sorts]);
    }
  });
});
