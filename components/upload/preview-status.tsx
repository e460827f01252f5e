import { Banner } from '../ui/banner';
import { ProblemList } from './problem-list';
import { notUsedMessage, type Problem } from './upload-model';

/**
 * The preview's verdict on the file: its problems, else — only when every column with numbers has
 * a role — "All N points are valid." A numeric column without a role is said ("Not used: …"),
 * whatever else holds: it would not be stored.
 */
export function PreviewStatus({
  problems,
  total,
  rowWord,
  points,
  headers,
  notUsed,
}: {
  problems: Problem[];
  total?: number;
  rowWord: string;
  /** Points of the curve when it is valid. */
  points?: number;
  headers: string[];
  /** Indexes of numeric columns without a role. */
  notUsed: number[];
}) {
  return (
    <>
      {problems.length ? <ProblemList problems={problems} total={total} rowWord={rowWord} /> : null}
      {notUsed.length ? <Banner tone="warning" message={notUsedMessage(headers, notUsed)} /> : null}
      {problems.length === 0 && points !== undefined ? (
        <Banner tone={notUsed.length ? 'info' : 'success'} message={notUsed.length ? `The ${points} points of the columns with a role are valid.` : `All ${points} points are valid.`} />
      ) : null}
    </>
  );
}
