import bcrypt from 'bcryptjs';

const COST = 12;

export const hashPassword = (plain: string) => bcrypt.hash(plain, COST);
export const checkPassword = (plain: string, hash: string) => bcrypt.compare(plain, hash);

// Compared against when the e-mail is unknown, so both failures take the same time.
const decoy = bcrypt.hashSync('evenhand-no-such-account', COST);
export const burnPasswordCheck = (plain: string) => bcrypt.compare(plain, decoy);
