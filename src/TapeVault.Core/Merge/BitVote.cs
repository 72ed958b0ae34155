namespace TapeVault.Core.Merge;

/// <summary>One reading of a block's bytes: what it read, each byte's estimated chance of being wrong, and which independent reading it belongs to.</summary>
internal sealed record VoteReading(byte[] Bytes, float[] ByteErrors, int Group);

/// <summary>The bytes a vote and search settled on, how many checksum trials it took, and the estimated chance they are right.</summary>
internal sealed record VoteOutcome(byte[] Bytes, int Trials, double Confidence);

/// <summary>
/// A margin-weighted bit vote across readings, then a bounded search that flips the least certain bits until the
/// check holds. Each reading's vote on a bit is the log-likelihood ratio of its byte being right; readings of one
/// independent group (the detector settings of one capture, which saw the same signal) are averaged, groups are
/// summed.
/// </summary>
internal static class BitVote
{
    /// <summary>The chance that a bit of a wrong byte is wrong: half the bits of a random byte differ (common practice for a byte of unknown error).</summary>
    private const double BitShareOfByteError = 0.5;

    /// <summary>Per bit (byte i, bit b at 8i + b): the summed log-likelihood ratio for a 1.</summary>
    public static double[] BitEvidence(IReadOnlyList<VoteReading> readings, int length)
    {
        var total = new double[length * 8];
        var groupSum = new double[length * 8];
        var groupCount = new int[length];
        foreach (var group in readings.GroupBy(r => r.Group))
        {
            Array.Clear(groupSum);
            Array.Clear(groupCount);
            foreach (var reading in group)
            {
                int n = Math.Min(length, reading.Bytes.Length);
                for (int i = 0; i < n; i++)
                {
                    double q = Math.Clamp(reading.ByteErrors[i] * BitShareOfByteError, 1e-7, 0.5);
                    double llr = Math.Log((1 - q) / q);
                    groupCount[i]++;
                    for (int b = 0; b < 8; b++)
                    {
                        groupSum[(i * 8) + b] += ((reading.Bytes[i] >> b) & 1) == 1 ? llr : -llr;
                    }
                }
            }

            for (int i = 0; i < length; i++)
            {
                if (groupCount[i] > 0)
                {
                    for (int b = 0; b < 8; b++)
                    {
                        total[(i * 8) + b] += groupSum[(i * 8) + b] / groupCount[i];
                    }
                }
            }
        }

        return total;
    }

    /// <summary>
    /// The vote's bytes, then up to <paramref name="maximumTrials"/> patterns of flips over the
    /// <paramref name="repairBits"/> least certain bits, cheapest first, until <paramref name="holds"/> accepts one; the
    /// patterns left after it are tried too, for its confidence, up to <paramref name="trialsAfterHit"/> of them or until
    /// those left are together too unlikely to matter. Null when no pattern holds.
    /// </summary>
    /// <param name="tieBreak">The bytes of the most trusted reading: a bit the vote leaves even takes its value.</param>
    public static VoteOutcome? Search(
        IReadOnlyList<VoteReading> readings,
        int length,
        byte[] tieBreak,
        Func<byte[], bool> holds,
        double falseMatch,
        int repairBits,
        int maximumTrials,
        int trialsAfterHit)
    {
        ArgumentNullException.ThrowIfNull(holds);
        var evidence = BitEvidence(readings, length);
        var bytes = new byte[length];
        var certainty = new double[length * 8];
        for (int i = 0; i < length; i++)
        {
            for (int b = 0; b < 8; b++)
            {
                double e = evidence[(i * 8) + b];
                bool one = e > 0 || (e == 0 && i < tieBreak.Length && ((tieBreak[i] >> b) & 1) == 1);
                if (one)
                {
                    bytes[i] |= (byte)(1 << b);
                }

                certainty[(i * 8) + b] = Math.Abs(e);
            }
        }

        // log P(vote right) under independent bits: every bit on the side its evidence points to.
        double logVote = 0;
        foreach (double c in certainty)
        {
            logVote -= Softplus(-c);
        }

        // The least certain bits, and every pattern of flips over them, cheapest (most probable) first.
        int k = Math.Min(Math.Min(repairBits, certainty.Length), MergeOptions.MostRepairBits);
        var weakest = Enumerable.Range(0, certainty.Length).OrderBy(i => certainty[i]).Take(k).ToArray();
        int patterns = 1 << k;
        var cost = new double[patterns];
        for (int mask = 1; mask < patterns; mask++)
        {
            int low = System.Numerics.BitOperations.TrailingZeroCount(mask);
            cost[mask] = cost[mask & (mask - 1)] + certainty[weakest[low]];
        }

        var order = Enumerable.Range(0, patterns).OrderBy(m => cost[m]).ThenBy(m => System.Numerics.BitOperations.PopCount((uint)m)).Take(maximumTrials).ToArray();
        double triedMass = 0;
        int trials = 0;
        foreach (int mask in order)
        {
            trials++;
            Flip(bytes, weakest, mask);
            double logPattern = logVote - cost[mask];
            double pattern = Math.Exp(logPattern);
            triedMass += pattern;
            if (holds(bytes))
            {
                // Bayes over "this pattern is the block" against "the block is another pattern of the search that
                // holds too" and "the block is none of the patterns tried, and this one matched by chance". The
                // patterns after it that hold are found by trying every one the search would have tried: a weak check
                // (an xor or a sum, which two misread bits at one bit position pass) lets several through, each as
                // likely the block as its bit odds say. The bit odds come from per-byte estimates and do not order
                // the patterns reliably, so the search's multiplicity is charged explicitly too: trying n patterns
                // against a check gives n chances of a false match.
                // The patterns not tried are counted as if each held (their whole chance goes to "another pattern"),
                // so that stopping early never makes the confidence higher than trying them all would: the search stops
                // when they weigh too little to move it (UntriedShare of the found pattern's chance) or after
                // trialsAfterHit of them.
                // The chances of the other patterns are kept as shares of this one's, which stay in range where each
                // chance alone is too small for a double (a long block of doubtful bits).
                var found = bytes.ToArray();
                Flip(bytes, weakest, mask);
                var untried = new double[order.Length + 1];
                for (int i = order.Length - 1; i >= trials; i--)
                {
                    untried[i] = untried[i + 1] + Math.Exp(cost[mask] - cost[order[i]]);
                }

                double others = 0;
                for (int i = trials; i < order.Length; i++)
                {
                    if (untried[i] <= UntriedShare || i - trials >= trialsAfterHit)
                    {
                        others += untried[i];
                        break;
                    }

                    Flip(bytes, weakest, order[i]);
                    if (holds(bytes))
                    {
                        others += Math.Exp(cost[mask] - cost[order[i]]);
                    }

                    Flip(bytes, weakest, order[i]);
                }

                double byChance = Math.Max(0, 1 - triedMass) * Math.Min(1, trials * falseMatch);
                double elsewhere = others + (byChance <= 0 ? 0 : Math.Exp(Math.Log(byChance) - logPattern));
                double confidence = 1 / (1 + elsewhere);
                return new VoteOutcome(found, trials, confidence);
            }

            Flip(bytes, weakest, mask);
        }

        return null;
    }

    /// <summary>
    /// The chance, as a share of the found pattern's, below which the patterns left after a hit are not tried (a bound
    /// on how much they could lower its confidence: it moves it by 1e-6 at most).
    /// </summary>
    private const double UntriedShare = 1e-6;

    /// <summary>log(1 + e^x) without overflow.</summary>
    public static double Softplus(double x) => x > 30 ? x : Math.Log(1 + Math.Exp(x));

    private static void Flip(byte[] bytes, int[] bits, int mask)
    {
        for (int m = mask; m != 0; m &= m - 1)
        {
            int bit = bits[System.Numerics.BitOperations.TrailingZeroCount(m)];
            bytes[bit >> 3] ^= (byte)(1 << (bit & 7));
        }
    }
}
