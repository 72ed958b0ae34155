using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.Migrations
{
    /// <inheritdoc />
    public partial class EventChain : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<string>(
                name: "PreviousSha256",
                table: "Events",
                type: "TEXT",
                maxLength: 64,
                nullable: true);

            migrationBuilder.AddColumn<string>(
                name: "Sha256",
                table: "Events",
                type: "TEXT",
                maxLength: 64,
                nullable: true);

            // Events made before the chain get their hashes once, at the next start (EventChain.SealLegacyAsync): the
            // one change the log allows is filling in the two chain columns of a row that has none, all else unchanged.
            migrationBuilder.Sql("DROP TRIGGER IF EXISTS \"Events_NoUpdate\";");
            migrationBuilder.Sql("""
                CREATE TRIGGER "Events_NoUpdate" BEFORE UPDATE ON "Events"
                WHEN NOT (OLD."Sha256" IS NULL AND OLD."PreviousSha256" IS NULL
                    AND NEW."Sha256" IS NOT NULL AND NEW."PreviousSha256" IS NOT NULL
                    AND NEW."Id" = OLD."Id" AND NEW."EventType" IS OLD."EventType" AND NEW."OccurredUtc" IS OLD."OccurredUtc"
                    AND NEW."Agent" IS OLD."Agent" AND NEW."ObjectType" IS OLD."ObjectType" AND NEW."ObjectId" IS OLD."ObjectId"
                    AND NEW."ItemId" IS OLD."ItemId" AND NEW."Outcome" IS OLD."Outcome" AND NEW."Detail" IS OLD."Detail")
                BEGIN SELECT RAISE(ABORT, 'The event log is append-only: events cannot be changed.'); END;
                """);

            // A new event must carry its place in the chain.
            migrationBuilder.Sql("""
                CREATE TRIGGER "Events_Chained" BEFORE INSERT ON "Events"
                WHEN NEW."Sha256" IS NULL OR NEW."PreviousSha256" IS NULL
                BEGIN SELECT RAISE(ABORT, 'The event log is chained: a new event must carry its SHA-256 and the previous one.'); END;
                """);
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.Sql("DROP TRIGGER IF EXISTS \"Events_Chained\";");
            migrationBuilder.Sql("DROP TRIGGER IF EXISTS \"Events_NoUpdate\";");
            migrationBuilder.Sql("""
                CREATE TRIGGER "Events_NoUpdate" BEFORE UPDATE ON "Events"
                BEGIN SELECT RAISE(ABORT, 'The event log is append-only: events cannot be changed.'); END;
                """);
            migrationBuilder.DropColumn(
                name: "PreviousSha256",
                table: "Events");

            migrationBuilder.DropColumn(
                name: "Sha256",
                table: "Events");
        }
    }
}
