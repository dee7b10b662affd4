import { cleanup, fireEvent, render, screen, within } from '@testing-library/react';
import { useState } from 'react';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { ServerTable, type RegisterColumn, type SortState } from './server-table';

interface Row {
  id: string;
  tag: string;
  due: number;
  note: string;
}

const columns: RegisterColumn<Row>[] = [
  { id: 'tag', header: 'Tag', sortKey: 'tag', cell: (r) => r.tag },
  { id: 'due', header: 'Due in days', sortKey: 'dueAt', numeric: true, cell: (r) => r.due },
  { id: 'note', header: 'Note', optional: true, cell: (r) => r.note },
];

const ALL: Row[] = Array.from({ length: 7 }, (_, i) => ({ id: `r${i}`, tag: `FT-${101 + i}`, due: 30 - i, note: `note ${i}` }));

/** A page holding sort and page as the register page does, serving rows as a server would. */
function Harness({ calls }: { calls: string[] }) {
  const [sort, setSort] = useState<SortState>({ sort: 'tag', dir: 'asc' });
  const [page, setPage] = useState(1);
  const sorted = [...ALL].sort((a, b) => {
    const d = sort.sort === 'tag' ? a.tag.localeCompare(b.tag) : a.due - b.due;
    return sort.dir === 'asc' ? d : -d;
  });
  return (
    <ServerTable
      caption="Instruments"
      storageKey="test.columns"
      columns={columns}
      rows={sorted.slice((page - 1) * 3, page * 3)}
      rowKey={(r) => r.id}
      total={ALL.length}
      page={page}
      pageSize={3}
      sort={sort}
      onSort={(s) => {
        calls.push(`sort ${s.sort} ${s.dir}`);
        setSort(s);
        setPage(1);
      }}
      onPage={(p) => {
        calls.push(`page ${p}`);
        setPage(p);
      }}
      empty="No instruments"
    />
  );
}

const header = (name: RegExp) => screen.getAllByRole('columnheader').find((h) => name.test(h.textContent ?? ''))!;
const firstCells = () => screen.getAllByRole('row').slice(1).map((r) => within(r).getAllByRole('cell')[0]!.textContent);

beforeEach(() => localStorage.clear());
afterEach(cleanup);

describe('ServerTable (sorting and paging on TanStack Table state, done by the server)', () => {
  it('sorts a column ascending on the first click, then flips, never clearing the sort', () => {
    const calls: string[] = [];
    render(<Harness calls={calls} />);
    expect(header(/^Tag/).getAttribute('aria-sort')).toBe('ascending');
    expect(header(/^Due/).getAttribute('aria-sort')).toBe('none');
    fireEvent.click(within(header(/^Due/)).getByRole('button'));
    fireEvent.click(within(header(/^Due/)).getByRole('button'));
    fireEvent.click(within(header(/^Due/)).getByRole('button'));
    fireEvent.click(within(header(/^Tag/)).getByRole('button'));
    expect(calls).toEqual(['sort dueAt asc', 'sort dueAt desc', 'sort dueAt asc', 'sort tag asc']);
    fireEvent.click(within(header(/^Tag/)).getByRole('button'));
    expect(calls.at(-1)).toBe('sort tag desc');
    expect(header(/^Tag/).getAttribute('aria-sort')).toBe('descending');
    expect(header(/^Due/).getAttribute('aria-sort')).toBe('none');
    expect(firstCells()).toEqual(['FT-107', 'FT-106', 'FT-105']);
  });

  it('pages with Previous and Next, within the page count the total gives', () => {
    const calls: string[] = [];
    render(<Harness calls={calls} />);
    const prev = screen.getByRole('button', { name: 'Previous' });
    const nextBtn = screen.getByRole('button', { name: 'Next' });
    expect(screen.getByRole('navigation', { name: 'Pages' }).textContent).toContain('Page 1 of 3');
    expect((prev as HTMLButtonElement).disabled).toBe(true);
    fireEvent.click(nextBtn);
    fireEvent.click(nextBtn);
    expect(calls).toEqual(['page 2', 'page 3']);
    expect((nextBtn as HTMLButtonElement).disabled).toBe(true);
    expect(firstCells()).toEqual(['FT-107']);
    expect(screen.getByText(/^Rows/).textContent).toBe('Rows 7–7 of 7');
    fireEvent.click(prev);
    expect(calls.at(-1)).toBe('page 2');
    expect(firstCells()).toEqual(['FT-104', 'FT-105', 'FT-106']);
  });

  it('hides optional columns until chosen (a column the server cannot sort has no sort button), and remembers the choice', () => {
    render(<Harness calls={[]} />);
    expect(screen.queryByRole('columnheader', { name: 'Note' })).toBeNull();
    fireEvent.click(screen.getByRole('checkbox', { name: 'Note' }));
    const note = screen.getByRole('columnheader', { name: 'Note' });
    expect(within(note).queryByRole('button')).toBeNull();
    expect(note.getAttribute('aria-sort')).toBeNull();
    expect(within(screen.getAllByRole('row')[1]!).getAllByRole('cell')).toHaveLength(3);
    fireEvent.click(screen.getByRole('checkbox', { name: 'Tag' }));
    expect(screen.queryByRole('columnheader', { name: /^Tag/ })).toBeNull();
    expect(JSON.parse(localStorage.getItem('test.columns')!)).toEqual(['tag']);
  });
});
