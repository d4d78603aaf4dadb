// Creates a user from the command line (the first administrator of a database without demo data).
// npm run user:create -- --email a@b.org --name "A B" --role admin   (password asked on the terminal,
// or read from the first line of standard input when it is not a terminal)
import { MikroORM } from '@mikro-orm/postgresql';
import { createInterface } from 'node:readline';
import { parseArgs } from 'node:util';
import { isRole, ROLES } from '../../api/src/domain/roles.js';
import { HttpError } from '../../api/src/http-error.js';
import { createUser } from '../../api/src/services/user.service.js';
import { ormConfig } from '../mikro-orm.config.js';

const { values } = parseArgs({ options: { email: { type: 'string' }, name: { type: 'string' }, role: { type: 'string', default: 'admin' } } });
if (!values.email || !values.name || !isRole(values.role)) {
  console.error(`usage: npm run user:create -- --email ADDRESS --name "FULL NAME" [--role ${ROLES.join('|')}]`);
  process.exit(2);
}

function askPassword(): Promise<string> {
  return new Promise((resolve) => {
    const rl = createInterface({ input: process.stdin, output: process.stdout, terminal: process.stdin.isTTY });
    if (process.stdin.isTTY) {
      process.stdout.write('Password (at least 12 characters): ');
      (rl as unknown as { _writeToOutput: (s: string) => void })._writeToOutput = () => undefined;
    }
    rl.once('close', () => resolve(''));
    rl.once('line', (line) => {
      rl.close();
      if (process.stdin.isTTY) process.stdout.write('\n');
      resolve(line);
    });
  });
}

const password = await askPassword();
const orm = await MikroORM.init(ormConfig());
try {
  const user = await createUser(orm.em.fork(), null, { email: values.email, name: values.name, role: values.role, password });
  console.log(`created ${user.role} ${user.email} (id ${user.id})`);
} catch (err) {
  console.error(err instanceof HttpError ? err.message : err);
  process.exitCode = 1;
} finally {
  await orm.close();
}
