// The SQLite tier survives a damaged file: a truncated or overwritten database is detected when opened, moved
// aside (kept for inspection), rebuilt empty and reported; `cache clear` empties it and removes what was set aside.
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { cacheFiles, removeSetAside, SqliteCacheLayer, SQLITE_FILE_NAME, type SqliteOpenEvent } from '../../src/cache/sqlite.js';

let directory: string;
beforeEach(() => {
  directory = mkdtempSync(join(tmpdir(), 'renyi-bound-sqlite-'));
});
afterEach(() => rmSync(directory, { recursive: true, force: true }));

/** A database holding `entries` results of a few kB each, closed again. */
async function filledDatabase(entries: number): Promise<string> {
  const path = join(directory, SQLITE_FILE_NAME);
  const layer = new SqliteCacheLayer(path);
  for (let i = 0; i < entries; i++) await layer.set(`hash-${i}`, JSON.stringify({ filler: 'x'.repeat(3000), i }));
  await layer.close();
  return path;
}

function open(path: string): { layer: SqliteCacheLayer; events: SqliteOpenEvent[] } {
  const events: SqliteOpenEvent[] = [];
  return { layer: new SqliteCacheLayer(path, (event) => events.push(event)), events };
}

describe('SqliteCacheLayer on a damaged file', () => {
  it('reports a new file as created, and an intact one as nothing at all', async () => {
    const path = join(directory, SQLITE_FILE_NAME);
    const first = open(path);
    expect(first.events).toEqual([{ kind: 'created', path }]);
    await first.layer.set('a', '1');
    await first.layer.close();
    const second = open(path);
    expect(second.events).toEqual([]);
    expect(await second.layer.get('a')).toBe('1');
    await second.layer.close();
  });

  it('detects a file truncated to half its length, moves it aside byte for byte, and starts empty', async () => {
    const path = await filledDatabase(300);
    truncateSync(path, Math.floor(statSync(path).size / 2));
    const damaged = readFileSync(path);
    const { layer, events } = open(path);
    expect(events).toHaveLength(1);
    const event = events[0] as Extract<SqliteOpenEvent, { kind: 'replaced-corrupt' }>;
    expect(event.kind).toBe('replaced-corrupt');
    expect(event.reason).toMatch(/malformed|not a database|quick_check/);
    expect(readFileSync(event.movedTo).equals(damaged)).toBe(true);
    expect(layer.count()).toBe(0);
    await layer.set('fresh', 'entry');
    expect(await layer.get('fresh')).toBe('entry');
    await layer.close();
  });

  it('detects a file overwritten with garbage and rebuilds it', async () => {
    const path = await filledDatabase(5);
    writeFileSync(path, 'not a database '.repeat(500));
    const { layer, events } = open(path);
    expect(events.map((e) => e.kind)).toEqual(['replaced-corrupt']);
    expect((events[0] as { reason: string }).reason).toMatch(/not a database/);
    expect(await layer.get('hash-1')).toBeUndefined();
    await layer.close();
  });

  it('clear empties the database; removeSetAside deletes the damaged copies', async () => {
    const path = await filledDatabase(20);
    writeFileSync(join(directory, `${SQLITE_FILE_NAME}.corrupt-earlier`), 'old damaged copy');
    const layer = new SqliteCacheLayer(path);
    expect(layer.count()).toBe(20);
    expect(layer.clear()).toBe(20);
    expect(layer.count()).toBe(0);
    await layer.close();
    expect(removeSetAside(directory)).toEqual([join(directory, `${SQLITE_FILE_NAME}.corrupt-earlier`)]);
    expect(cacheFiles(directory).map((f) => f.path)).toContain(path);
    expect(existsSync(join(directory, `${SQLITE_FILE_NAME}.corrupt-earlier`))).toBe(false);
  });
});
