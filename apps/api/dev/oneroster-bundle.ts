/**
 * Makes an invented OneRoster 1.1 bulk bundle (every name is made up: schools are the demo district's,
 * teachers are "<Given> Fictive", students "Given<n> Family<n>" — Evenhand drops students' names anyway).
 *
 *   npx tsx apps/api/dev/oneroster-bundle.ts [--schools 2] [--classes 2] [--students 12] [--out file.zip]
 *
 * Without --out it rewrites apps/api/test/fixtures/oneroster-demo.zip, the bundle the tests and the demo use.
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { crc32, deflateRawSync } from 'node:zlib';

/** The demo district's schools (apps/api/src/seed/demo.ts), as the export names them. */
export const DEMO_SCHOOLS = [
  { code: 'ALD', name: 'Alderquill Elementary' },
  { code: 'BRK', name: 'Brackenwold Middle School' },
  { code: 'CDH', name: 'Cinderhaze Elementary' },
  { code: 'DNP', name: 'Dunnowick Park Elementary' },
  { code: 'ELR', name: 'Emberlark Middle School' },
  { code: 'FRN', name: 'Fernquillow Elementary' },
];
const GIVEN = ['Ondine', 'Perrin', 'Quill', 'Rosalind', 'Soren', 'Talia', 'Ulric', 'Vesper'];

export interface BundleShape {
  schools: number;
  classesPerSchool: number;
  studentsPerClass: number;
  /** Students numbered from here (a later export can shift who is in which class). */
  firstStudent?: number;
  /** Student numbers left out of the export (they left). */
  without?: number[];
  /** All students spread evenly over the classes instead of `studentsPerClass` each. */
  totalStudents?: number;
}

const csv = (rows: (string | number)[][]) =>
  rows.map((r) => r.map((v) => (/[",\n]/.test(String(v)) ? `"${String(v).replace(/"/g, '""')}"` : String(v))).join(',')).join('\r\n') + '\r\n';

/** The bundle's CSV files by name. Schools beyond the demo's six get invented codes (SCH7…). */
export function oneRosterFiles(shape: BundleShape): Record<string, string> {
  const orgs: (string | number)[][] = [['sourcedId', 'status', 'dateLastModified', 'name', 'type', 'identifier', 'parentSourcedId'], ['org-district', '', '', 'Evenhand Demo District', 'district', 'DEMO', '']];
  const classes: (string | number)[][] = [[
    'sourcedId', 'status', 'dateLastModified', 'title', 'grades', 'courseSourcedId', 'classCode', 'classType', 'location',
    'schoolSourcedId', 'termSourcedIds', 'subjects', 'subjectCodes', 'periods',
  ]];
  const users: (string | number)[][] = [[
    'sourcedId', 'status', 'dateLastModified', 'enabledUser', 'orgSourcedIds', 'role', 'username', 'userIds', 'givenName',
    'familyName', 'middleName', 'identifier', 'email', 'sms', 'phone', 'agentSourcedIds', 'grades', 'password',
  ]];
  const enrollments: (string | number)[][] = [['sourcedId', 'status', 'dateLastModified', 'classSourcedId', 'schoolSourcedId', 'userSourcedId', 'role', 'primary', 'beginDate', 'endDate']];
  const without = new Set(shape.without ?? []);
  let student = shape.firstStudent ?? 1;
  for (let s = 0; s < shape.schools; s++) {
    const school = DEMO_SCHOOLS[s] ?? { code: `SCH${s + 1}`, name: `Invented School ${s + 1}` };
    const org = `org-${school.code.toLowerCase()}`;
    orgs.push([org, '', '', school.name, 'school', school.code, 'org-district']);
    users.push([`adm-${school.code.toLowerCase()}`, '', '', 'true', org, 'administrator', '', '', 'Marlo', `Fictive-${school.code}`, '', '', `principal.${school.code.toLowerCase()}@roster.evenhand.test`, '', '', '', '', '']);
    for (let c = 0; c < shape.classesPerSchool; c++) {
      const cls = `cls-${school.code.toLowerCase()}-${c + 1}`;
      const teacher = `tch-${school.code.toLowerCase()}-${c + 1}`;
      classes.push([cls, '', '', `Grade 4 Reading ${c + 1}`, '04', 'crs-reading-4', '', 'homeroom', '', org, 'term-2026', 'Reading', '', '']);
      users.push([teacher, '', '', 'true', org, 'teacher', '', '', GIVEN[c % GIVEN.length], `Fictive-${school.code}${c + 1}`, '', '', `teacher.${school.code.toLowerCase()}${c + 1}@roster.evenhand.test`, '', '', '', '', '']);
      enrollments.push([`enr-${teacher}`, '', '', cls, org, teacher, 'teacher', 'true', '', '']);
      const index = s * shape.classesPerSchool + c;
      const classCount = shape.schools * shape.classesPerSchool;
      const size = shape.totalStudents === undefined ? shape.studentsPerClass : Math.floor(((index + 1) * shape.totalStudents) / classCount) - Math.floor((index * shape.totalStudents) / classCount);
      for (let k = 0; k < size; k++, student++) {
        if (without.has(student)) continue;
        const id = `stu-${String(student).padStart(6, '0')}`;
        users.push([id, '', '', 'true', org, 'student', `user${student}`, `{SIS:${900000 + student}}`, `Given${student}`, `Family${student}`, '', `SIS-${student}`, `pupil${student}@pupils.roster.evenhand.test`, '', '', '', '04', '']);
        enrollments.push([`enr-${cls}-${id}`, '', '', cls, org, id, 'student', 'false', '', '']);
      }
    }
  }
  const manifest = csv([
    ['propertyName', 'value'],
    ['manifest.version', '1.0'],
    ['oneroster.version', '1.1'],
    ['file.academicSessions', 'absent'],
    ['file.categories', 'absent'],
    ['file.classes', 'bulk'],
    ['file.classResources', 'absent'],
    ['file.courses', 'absent'],
    ['file.courseResources', 'absent'],
    ['file.demographics', 'absent'],
    ['file.enrollments', 'bulk'],
    ['file.lineItems', 'absent'],
    ['file.orgs', 'bulk'],
    ['file.resources', 'absent'],
    ['file.results', 'absent'],
    ['file.users', 'bulk'],
  ]);
  return { 'manifest.csv': manifest, 'orgs.csv': csv(orgs), 'classes.csv': csv(classes), 'users.csv': csv(users), 'enrollments.csv': csv(enrollments) };
}

/**
 * A zip of the given entries (deflated), written here rather than with a zip library so tests can also
 * make the bundles Evenhand must refuse: entries named "../x", and entries packed far past any CSV.
 */
export function zipEntries(entries: { name: string; data: Buffer | string }[]): Buffer {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  for (const e of entries) {
    const data = Buffer.isBuffer(e.data) ? e.data : Buffer.from(e.data, 'utf8');
    const packed = deflateRawSync(data);
    const name = Buffer.from(e.name, 'utf8');
    const crc = crc32(data);
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(0x0800, 6); // UTF-8 names
    local.writeUInt16LE(8, 8); // deflate
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(name.length, 26);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(0x0800, 8);
    central.writeUInt16LE(8, 10);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(packed.length, 20);
    central.writeUInt32LE(data.length, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt32LE(offset, 42);
    locals.push(local, name, packed);
    centrals.push(central, name);
    offset += local.length + name.length + packed.length;
  }
  const directory = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(entries.length, 8);
  end.writeUInt16LE(entries.length, 10);
  end.writeUInt32LE(directory.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, directory, end]);
}

export const zipBundle = (files: Record<string, string>) => zipEntries(Object.entries(files).map(([name, data]) => ({ name, data })));

export const DEMO_BUNDLE = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../test/fixtures/oneroster-demo.zip');
/** The shape of the shipped bundle: two demo schools, two classes each, twelve students a class. */
export const DEMO_SHAPE: BundleShape = { schools: 2, classesPerSchool: 2, studentsPerClass: 12 };

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  const arg = (name: string, fallback: number) => {
    const i = process.argv.indexOf(`--${name}`);
    return i > 0 ? Number(process.argv[i + 1]) : fallback;
  };
  const out = process.argv.includes('--out') ? process.argv[process.argv.indexOf('--out') + 1] : DEMO_BUNDLE;
  const shape = { schools: arg('schools', DEMO_SHAPE.schools), classesPerSchool: arg('classes', DEMO_SHAPE.classesPerSchool), studentsPerClass: arg('students', DEMO_SHAPE.studentsPerClass) };
  writeFileSync(out, zipBundle(oneRosterFiles(shape)));
  console.log(`Wrote ${out}`);
}
