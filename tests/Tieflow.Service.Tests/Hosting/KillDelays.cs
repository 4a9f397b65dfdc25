namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The extra wait of the crash tests between the moment a run has written enough windows and its SIGKILL: a seeded
/// pseudo-random delay of 0 to <see cref="Longest"/>, drawn anew for each kill, so that the kills land at different
/// phases of the write cycle (inside a store transaction, between two batches, while the forwarder sends or removes a
/// batch of the outbox) rather than at the same point after a console summary every time. The seed is fixed
/// (<see cref="DefaultSeed"/>), so a run repeats its sequence of delays; <c>TIEFLOW_SOAK_KILL_SEED</c> (a whole number)
/// gives another sequence. The tests log the seed and each delay.
/// </summary>
internal sealed class KillDelays
{
    /// <summary>The seed when <c>TIEFLOW_SOAK_KILL_SEED</c> is not set.</summary>
    public const int DefaultSeed = 9;

    /// <summary>The longest extra wait: several windows of the run at 20,000 times real time, and more than a forward cycle.</summary>
    public static readonly TimeSpan Longest = TimeSpan.FromMilliseconds(500);

    private readonly Random _random;

    public KillDelays(int seed)
    {
        Seed = seed;
        _random = new Random(seed);
    }

    public int Seed { get; }

    /// <summary>The delays of <c>TIEFLOW_SOAK_KILL_SEED</c>, or of <see cref="DefaultSeed"/> when it is not set.</summary>
    public static KillDelays FromEnvironment() => new(SoakSize.Of("TIEFLOW_SOAK_KILL_SEED", DefaultSeed, minimum: 0));

    /// <summary>The delay before the next kill, whole milliseconds from 0 to <see cref="Longest"/>.</summary>
    public TimeSpan Next() => TimeSpan.FromMilliseconds(_random.Next(0, (int)Longest.TotalMilliseconds + 1));
}
