import { createReadStream, promises as fs } from "fs";
import { createServer, type Server } from "http";
import * as path from "path";

const TYPES: Record<string, string> = {
  ".html": "text/html; charset=utf-8",
  ".js": "text/javascript; charset=utf-8",
  ".json": "application/json",
  ".csv": "text/csv; charset=utf-8",
  ".png": "image/png",
  ".xml": "application/xml",
  ".map": "application/json",
};

/** Serves `root` on 127.0.0.1 at a free port; resolves to the server and its base URL. */
export async function serveDirectory(root: string): Promise<{ server: Server; url: string }> {
  const server = createServer(async (request, response) => {
    const pathname = decodeURIComponent(new URL(request.url ?? "/", "http://localhost").pathname);
    const file = path.join(root, path.normalize(pathname).replace(/^([/\\])+/, ""));
    if (!file.startsWith(root)) {
      response.writeHead(403).end();
      return;
    }
    try {
      const stat = await fs.stat(file);
      if (!stat.isFile()) throw new Error("not a file");
      response.writeHead(200, { "Content-Type": TYPES[path.extname(file)] ?? "application/octet-stream" });
      createReadStream(file).pipe(response);
    } catch {
      response.writeHead(404).end("not found");
    }
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const address = server.address();
  const port = typeof address === "object" && address ? address.port : 0;
  return { server, url: `http://127.0.0.1:${port}` };
}
