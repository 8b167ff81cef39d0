// WorkerTeam: runs one body on several threads (the caller plus helpers from
// the thread pool) without allocating per call.
//
// The helpers are preallocated IThreadPoolWorkItem objects queued with
// UnsafeQueueUserWorkItem; the caller runs participant 0 itself and then waits
// (spinning briefly, then blocking on a monitor) until every helper has returned. Bodies
// share work through their own atomic counters, so a helper that starts late
// simply finds nothing left. The first exception thrown by any participant is
// rethrown on the caller after all have finished. Not re-entrant: one Run at a
// time per team.
//
// Helpers are borrowed from the process-wide ComputeBudget for the length of one
// Run: when other analyses use the budget, a run gets fewer participants (down
// to the caller alone). Bodies must therefore split their work over
// Participants, the number actually running, never over Threads.

namespace PathService.Engine.Sparse;

/// <summary>A body executed by each participant of a <see cref="WorkerTeam"/> run.</summary>
internal interface ITeamWork
{
    void Execute(int participant);
}

internal sealed class WorkerTeam
{
    private readonly Helper[] _helpers;
    private readonly object _gate = new();
    private ITeamWork? _work;
    private int _pending;
    private Exception? _error;

    public WorkerTeam(int threads)
    {
        Threads = Math.Max(1, threads);
        _helpers = new Helper[Threads - 1];
        for (int i = 0; i < _helpers.Length; i++) _helpers[i] = new Helper(this, i + 1);
    }

    /// <summary>Largest number of participants of a run (caller included).</summary>
    public int Threads { get; }

    /// <summary>Participants of the current run (caller included), set before any participant starts.</summary>
    public int Participants { get; private set; } = 1;

    /// <summary>Runs work.Execute(p) for p = 0 .. participants-1 (p = 0 on the calling thread) and waits for all.</summary>
    public void Run(ITeamWork work, int participants)
    {
        participants = Math.Clamp(participants, 1, Threads);
        int borrowed = participants > 1 ? ComputeBudget.TryBorrow(participants - 1) : 0;
        participants = 1 + borrowed;
        Participants = participants;
        if (participants == 1)
        {
            work.Execute(0);
            return;
        }
        try { RunShared(work, participants); }
        finally { ComputeBudget.Return(borrowed); }
    }

    private void RunShared(ITeamWork work, int participants)
    {
        _work = work;
        _error = null;
        Volatile.Write(ref _pending, participants - 1);
        for (int i = 0; i < participants - 1; i++)
            ThreadPool.UnsafeQueueUserWorkItem(_helpers[i], preferLocal: false);
        try
        {
            work.Execute(0);
        }
        catch (Exception e)
        {
            Interlocked.CompareExchange(ref _error, e, null);
        }
        var spin = new SpinWait();
        while (Volatile.Read(ref _pending) != 0 && !spin.NextSpinWillYield) spin.SpinOnce();
        if (Volatile.Read(ref _pending) != 0)
            lock (_gate)
                while (Volatile.Read(ref _pending) != 0) Monitor.Wait(_gate);
        _work = null;
        if (_error is { } err) throw new AggregateException(err);
    }

    private void Finished()
    {
        if (Interlocked.Decrement(ref _pending) == 0)
            lock (_gate) Monitor.PulseAll(_gate);
    }

    private sealed class Helper(WorkerTeam team, int participant) : IThreadPoolWorkItem
    {
        public void Execute()
        {
            try
            {
                team._work!.Execute(participant);
            }
            catch (Exception e)
            {
                Interlocked.CompareExchange(ref team._error, e, null);
            }
            finally
            {
                team.Finished();
            }
        }
    }
}
