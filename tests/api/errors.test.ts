import express from 'express';
import request from 'supertest';
import { errorHandler } from '@/server/lib/errors';
import { exclusionRanges } from '@/shared/stats';

/** The error handler answers bad input to the statistics engine as a 400 naming every field. */
test('StatsInputError becomes 400 validation_failed with field and reason', async () => {
  const app = express();
  app.get('/boom', () => {
    exclusionRanges({ x: [1, 2, 3], observed: [1, -2, 3] }, { x: [1, 3], central: [5, 1] });
  });
  app.use(errorHandler);
  const res = await request(app).get('/boom');
  expect(res.status).toBe(400);
  expect(res.body).toEqual({
    error: {
      code: 'validation_failed',
      message: expect.stringContaining('curve.observed[1]'),
      details: [{ field: 'curve.observed[1]', message: expect.stringContaining('must be a positive finite number') }],
    },
  });
});
