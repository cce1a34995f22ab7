// Starts www/serve.py on a free port (port 0) and reads the URL it prints.
import { spawn } from 'node:child_process';
import { once } from 'node:events';

export async function startPageServer(repoRoot, extraArgs = []) {
  const child = spawn('python3', ['www/serve.py', '--port', '0', '--quiet', ...extraArgs], {
    cwd: repoRoot,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stderr = '';
  child.stderr.on('data', (d) => { stderr += d; });
  const url = await new Promise((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`serve.py printed no URL in 10 s: ${stderr}`)), 10000);
    child.stdout.on('data', (d) => {
      out += d;
      const m = out.match(/http:\/\/127\.0\.0\.1:\d+\//);
      if (m) { clearTimeout(timer); resolve(m[0]); }
    });
    child.on('exit', (code) => { clearTimeout(timer); reject(new Error(`serve.py exited (${code}): ${stderr}`)); });
  });
  return {
    url,
    async close() {
      if (child.exitCode === null) {
        child.kill('SIGTERM');
        await once(child, 'exit');
      }
    },
  };
}
