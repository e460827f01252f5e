import { z } from 'zod';
test('zod loads', () => { expect(z.number().parse(1)).toBe(1); });
