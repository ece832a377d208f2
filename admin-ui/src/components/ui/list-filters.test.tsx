import { describe, expect, it } from 'vitest';
import { fireEvent, render, screen } from '@testing-library/react';
import { MemoryRouter } from 'react-router-dom';
import { useListState } from '@/hooks/use-list-state';
import { ListFilters } from './list-filters';

function Screen() {
  const list = useListState();
  return (
    <>
      <ListFilters list={list} timeRange fields={[{ key: 'search', label: 'Search', kind: 'text', width: 'w-40' }]} />
      <output data-testid="query">{JSON.stringify(list.query)}</output>
    </>
  );
}

const query = () => JSON.parse(screen.getByTestId('query').textContent!) as Record<string, unknown>;

describe('list filter bar', () => {
  it('sends From as an ISO instant, shows it back in local time, and Clear empties every field', () => {
    render(
      <MemoryRouter initialEntries={['/list?search=icu']}>
        <Screen />
      </MemoryRouter>,
    );
    expect((screen.getByLabelText('Search') as HTMLInputElement).value).toBe('icu');
    const from = screen.getByLabelText('From') as HTMLInputElement;
    fireEvent.change(from, { target: { value: '2026-12-01T21:30' } });
    // The reference is the platform's own reading of a local date-time (ECMA-262 Date), not our code.
    expect(query().from).toBe(new Date(2026, 11, 1, 21, 30).toISOString());
    expect(from.value).toBe('2026-12-01T21:30');
    expect(query().page).toBe(1);
    fireEvent.click(screen.getByRole('button', { name: 'Clear filters' }));
    expect(from.value).toBe('');
    expect((screen.getByLabelText('Search') as HTMLInputElement).value).toBe('');
    expect(query().from).toBeUndefined();
    expect(query().search).toBeUndefined();
  });
});
