import pg from 'pg';

/**
 * Creates a new, empty database on the server of `serverUrl` (for the evaluation's one-off
 * services), and returns its URL and a function that drops it again, connections and all.
 * `name` must be a plain identifier (letters, digits, underscores).
 */
export async function createScratchDatabase(
  serverUrl: string,
  name: string,
): Promise<{ url: string; drop: () => Promise<void> }> {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`createScratchDatabase: '${name}' is not a plain identifier`);
  const onServer = async (text: string) => {
    const client = new pg.Client({ connectionString: serverUrl });
    await client.connect();
    try {
      await client.query(text);
    } finally {
      await client.end();
    }
  };
  await onServer(`create database ${name}`);
  const url = new URL(serverUrl);
  url.pathname = `/${name}`;
  return { url: url.toString(), drop: () => onServer(`drop database if exists ${name} with (force)`) };
}
